//! `--svg` of `measure` and `null`: where each file's figure goes, and the
//! words on it.

use std::path::{Path, PathBuf};

use clap::Args;
use nidus::figures::MatrixFigureOptions;
use nidus::Error;

/// Options of the matrix figure (`nidus measure --svg`).
#[derive(Args, Debug, Clone)]
pub struct MatrixFigureArgs {
    /// Write a figure of each network (packed matrix with its isocline) as SVG to PATH
    /// (with several files: PATH's name with each file's name inserted).
    #[arg(long, value_name = "PATH")]
    pub svg: Option<PathBuf>,
    /// Figure: names of the row and column species, plural, for the axis titles
    /// (for example plants,visitors).
    #[arg(
        long,
        value_name = "ROWS,COLUMNS",
        default_value = "row species,column species"
    )]
    pub svg_names: String,
    /// Figure: what a cell value counts, for the colour legend of weighted networks
    /// (for example visits).
    #[arg(long, value_name = "WORD", default_value = "weight")]
    pub svg_unit: String,
}

impl MatrixFigureArgs {
    /// The library's figure options for one file.
    pub fn options(&self, file: &Path) -> nidus::Result<MatrixFigureOptions> {
        let (rows, cols) = self.svg_names.split_once(',').ok_or_else(|| {
            Error::InvalidArgument(format!(
                "--svg-names '{}': expected two names separated by a comma, e.g. plants,visitors",
                self.svg_names
            ))
        })?;
        Ok(MatrixFigureOptions {
            title: file.display().to_string(),
            row_name: rows.trim().to_string(),
            col_name: cols.trim().to_string(),
            weight_name: self.svg_unit.clone(),
        })
    }
}

/// The figure path of every input file: `base` itself for one file, else
/// `base` with each file's stem inserted before the extension
/// (`out.svg` -> `out.meadow.svg`). Two files with the same stem are an
/// error, since their figures would overwrite each other.
pub fn figure_paths(base: &Path, files: &[PathBuf]) -> nidus::Result<Vec<PathBuf>> {
    if files.len() == 1 {
        return Ok(vec![base.to_path_buf()]);
    }
    let stem = base
        .file_stem()
        .map_or("figure".into(), |s| s.to_string_lossy().into_owned());
    let ext = base
        .extension()
        .map_or("svg".into(), |s| s.to_string_lossy().into_owned());
    let mut out: Vec<PathBuf> = Vec::with_capacity(files.len());
    for f in files {
        let name = f
            .file_stem()
            .map_or("stdin".into(), |s| s.to_string_lossy().into_owned());
        let p = base.with_file_name(format!("{stem}.{name}.{ext}"));
        if let Some(k) = out.iter().position(|q| *q == p) {
            return Err(Error::InvalidArgument(format!(
                "--svg: {} and {} would both be drawn to {}; run them separately",
                files[k].display(),
                f.display(),
                p.display()
            )));
        }
        out.push(p);
    }
    Ok(out)
}
