//! Files written whole or not at all: a temporary file in the target's
//! folder, renamed over the target only when the writer is committed.

use std::fs::{self, File};
use std::io::{self, BufWriter};
use std::path::{Path, PathBuf};

use nidus::Error;

/// A file being written. Until [`AtomicFile::commit`] the target is left
/// as it was; dropping the value without committing removes the temporary.
pub struct AtomicFile {
    target: PathBuf,
    temp: PathBuf,
    out: Option<BufWriter<File>>,
}

impl AtomicFile {
    /// Starts writing `target` (through `.NAME.nidus-partial-PID` beside it).
    pub fn create(target: &Path) -> nidus::Result<Self> {
        let name = target.file_name().ok_or_else(|| {
            Error::InvalidArgument(format!("{} is not a file name", target.display()))
        })?;
        let dir = target.parent().unwrap_or(Path::new(""));
        let temp = dir.join(format!(
            ".{}.nidus-partial-{}",
            name.to_string_lossy(),
            std::process::id()
        ));
        let file = File::create(&temp).map_err(|source| Error::Write {
            path: temp.clone(),
            source,
        })?;
        Ok(AtomicFile {
            target: target.to_path_buf(),
            temp,
            out: Some(BufWriter::new(file)),
        })
    }

    /// The path being written in the end.
    pub fn target(&self) -> &Path {
        &self.target
    }

    /// The writer (of the temporary file).
    pub fn writer(&mut self) -> &mut BufWriter<File> {
        self.out.as_mut().expect("not yet committed")
    }

    /// Wraps an I/O error with the target's name.
    pub fn error(&self, source: io::Error) -> Error {
        Error::Write {
            path: self.target.clone(),
            source,
        }
    }

    /// Flushes, syncs to disk and renames the temporary over the target.
    pub fn commit(mut self) -> nidus::Result<()> {
        let out = self.out.take().expect("committed once");
        let file = out
            .into_inner()
            .map_err(|e| e.into_error())
            .and_then(|f| f.sync_all());
        if let Err(source) = file {
            return Err(self.error(source));
        }
        fs::rename(&self.temp, &self.target).map_err(|source| self.error(source))
    }
}

impl Drop for AtomicFile {
    fn drop(&mut self) {
        if self.out.take().is_some() {
            let _ = fs::remove_file(&self.temp);
        }
    }
}

/// Errors when `target` is the same file as one of `inputs` (by identity
/// where the system gives one, else by canonical path), so that writing it
/// cannot destroy an input.
pub fn refuse_input_as_target(
    target: &Path,
    inputs: &[PathBuf],
    option: &str,
) -> nidus::Result<()> {
    let Ok(t) = fs::metadata(target) else {
        return Ok(()); // a new file cannot be an input
    };
    let canon = fs::canonicalize(target).ok();
    for input in inputs {
        let Ok(i) = fs::metadata(input) else { continue };
        let same = same_file(&t, &i) || (canon.is_some() && fs::canonicalize(input).ok() == canon);
        if same {
            return Err(Error::InvalidArgument(format!(
                "{option} {} is the input file {}: it would be overwritten; choose another path",
                target.display(),
                input.display()
            )));
        }
    }
    Ok(())
}

#[cfg(unix)]
fn same_file(a: &fs::Metadata, b: &fs::Metadata) -> bool {
    use std::os::unix::fs::MetadataExt;
    a.dev() == b.dev() && a.ino() == b.ino()
}

#[cfg(not(unix))]
fn same_file(_: &fs::Metadata, _: &fs::Metadata) -> bool {
    false
}
