//! `nidus species`: which species make one network nested.

use std::io;
use std::path::PathBuf;
use std::process::ExitCode;

use super::numbers::num;
use super::{csv_field, emit, input_name, read_input, Format, LayoutArgs};
use clap::Args;
use nidus::analyses::species::{
    species_contributions, RedrawModel, SpeciesAnalysis, SpeciesOptions, SpeciesRecord, ROLE_Z,
};

/// Networks up to this many cells get 4 random packing starts by default,
/// larger ones none (packing is the slow part there; see the README).
const AUTO_RESTARTS_CELLS: usize = 40_000;

/// Species shown at each end of the text report.
const SHOWN: usize = 5;

#[derive(Args, Debug)]
pub struct SpeciesArgs {
    /// Network file (see README for the two layouts); `-` reads standard input.
    #[arg(value_name = "FILE")]
    file: PathBuf,
    /// How a species' links are re-drawn: proportional (Bascompte et al. 2003 probabilities)
    /// or keep-degree (its links moved to random partners).
    #[arg(long, default_value = "proportional", value_name = "M")]
    model: RedrawModel,
    /// Re-draws per species R.
    #[arg(long, default_value_t = 999, value_name = "R")]
    draws: usize,
    /// Seed: draw r of a species depends on (seed, species, r) alone.
    #[arg(long, required = true, value_name = "S")]
    seed: u64,
    /// Temperature: random starts of the packing search besides the degree-sorted one
    /// (default: 4 up to 40,000 cells, else 0).
    #[arg(long, value_name = "N")]
    restarts: Option<usize>,
    /// Also WNODF contributions for weighted data: each re-draw permutes the species' visit
    /// counts across all partners (a full WNODF per draw: slower).
    #[arg(long)]
    wnodf: bool,
    #[command(flatten)]
    input: LayoutArgs,
    /// Output format: text (the top and bottom species), json (one object per species per
    /// line) or csv (one row per species).
    #[arg(long, value_enum, default_value_t = Format::Text)]
    format: Format,
    /// Write a figure of the contributions (species ranked, bars from a zero line) as SVG
    /// to PATH.
    #[arg(long, value_name = "PATH")]
    svg: Option<PathBuf>,
}

const CSV_COLUMNS: &[&str] = &[
    "file",
    "side",
    "label",
    "degree",
    "contribution",
    "null_mean",
    "null_sd",
    "leave_one_out",
    "idiosyncratic_temperature",
    "role",
    "wnodf_contribution",
];

pub fn run(args: SpeciesArgs) -> nidus::Result<ExitCode> {
    // The reader's notes (species without links dropped, header found...)
    // go to stderr as for every subcommand.
    let net = read_input(&args.file, &args.input.read_options())?.network;
    let cells = net.nrows() * net.ncols();
    let opts = SpeciesOptions {
        model: args.model,
        draws: args.draws,
        seed: args.seed,
        pack_restarts: args
            .restarts
            .unwrap_or(if cells <= AUTO_RESTARTS_CELLS { 4 } else { 0 }),
        wnodf: args.wnodf,
    };
    let a = species_contributions(&net, &opts)?;
    let file = input_name(&args.file);
    let text = match args.format {
        Format::Text => text_report(&file, &a, net.nrows(), net.ncols(), net.is_weighted()),
        Format::Json => a
            .species
            .iter()
            .map(|s| json_line(&file, s))
            .collect::<String>(),
        Format::Csv => {
            let mut t = CSV_COLUMNS.join(",") + "\n";
            for s in &a.species {
                t += &csv_line(&file, s);
            }
            t
        }
    };
    emit(&mut io::stdout().lock(), &text);
    if let Some(path) = &args.svg {
        figure(path, &file, &a)?;
    }
    Ok(ExitCode::SUCCESS)
}

/// `--svg`: the defined contributions, ranked, each label marked with its
/// side; species with an undefined contribution are counted in the title.
fn figure(path: &std::path::Path, file: &str, a: &SpeciesAnalysis) -> nidus::Result<()> {
    let shown: Vec<&SpeciesRecord> = a
        .species
        .iter()
        .filter(|s| s.contribution.is_some())
        .collect();
    if shown.is_empty() {
        return Err(nidus::Error::InvalidArgument(format!(
            "--svg: {file}: no species has a defined contribution (every re-draw gave the same NODF), so there is nothing to draw"
        )));
    }
    let labels: Vec<String> = shown
        .iter()
        .map(|s| format!("{} ({})", s.label, s.side.name()))
        .collect();
    let values: Vec<f64> = shown.iter().filter_map(|s| s.contribution).collect();
    let left_out = a.species.len() - shown.len();
    let mut title = format!(
        "{file}: contribution of each species to NODF ({} re-draws, {})",
        a.options.draws, a.options.model
    );
    if left_out > 0 {
        title += &format!("; {left_out} undefined, not drawn");
    }
    let fig = nidus::figures::contributions_figure(
        &labels,
        &values,
        "contribution z (right of 0: more nested than its re-draws)",
        &title,
    )?;
    fig.save(path)?;
    eprintln!("nidus: figure written to {}", path.display());
    Ok(())
}

fn json_line(file: &str, s: &SpeciesRecord) -> String {
    let mut v = serde_json::to_value(s).expect("records serialise");
    let obj = v.as_object_mut().expect("an object");
    obj.shift_remove("index");
    let mut out = serde_json::Map::new();
    out.insert("file".into(), file.into());
    out.extend(std::mem::take(obj));
    serde_json::Value::Object(out).to_string() + "\n"
}

fn opt(x: Option<f64>) -> String {
    x.map(|v| v.to_string()).unwrap_or_default()
}

fn csv_line(file: &str, s: &SpeciesRecord) -> String {
    let fields = [
        csv_field(file),
        s.side.name().to_string(),
        csv_field(&s.label),
        s.degree.to_string(),
        opt(s.contribution),
        opt(s.null_mean),
        opt(s.null_sd),
        opt(s.leave_one_out),
        s.idiosyncratic_temperature.to_string(),
        s.role.name().to_string(),
        opt(s.wnodf_contribution),
    ];
    fields.join(",") + "\n"
}

fn fmt_opt(x: Option<f64>, width: usize) -> String {
    match x {
        Some(v) => format!("{:>width$}", num(v)),
        None => format!("{:>width$}", "undefined"),
    }
}

fn rows(list: &[&SpeciesRecord], wnodf: bool) -> String {
    let label_w = list
        .iter()
        .map(|s| s.label.chars().count())
        .max()
        .unwrap_or(5)
        .max(5);
    let mut t = format!(
        "  {:<4} {:<label_w$} {:>6} {:>12} {:>13} {:>15}{}  role\n",
        "side",
        "label",
        "degree",
        "contribution",
        "leave-one-out",
        "idiosyncratic T",
        if wnodf { "       wnodf" } else { "" }
    );
    for s in list {
        let w = if wnodf {
            format!(" {}", fmt_opt(s.wnodf_contribution, 11))
        } else {
            String::new()
        };
        t += &format!(
            "  {:<4} {:<label_w$} {:>6} {} {} {:>15}{w}  {}\n",
            s.side.name(),
            s.label,
            s.degree,
            fmt_opt(s.contribution, 12),
            fmt_opt(s.leave_one_out, 13),
            num(s.idiosyncratic_temperature),
            s.role.name()
        );
    }
    t
}

fn text_report(file: &str, a: &SpeciesAnalysis, m: usize, n: usize, weighted: bool) -> String {
    let o = &a.options;
    let mut t = format!(
        "{file}: {m} rows x {n} columns; NODF {}, packed temperature {}\n",
        num(a.nodf),
        num(a.temperature)
    );
    t += &format!(
        "contributions: {} re-draws per species, model {}, seed {}; temperature packing with {} random start(s)\n",
        o.draws, o.model, o.seed, o.pack_restarts
    );
    if weighted {
        t += "note: contributions, leave-one-out and temperature read who interacts with whom, not the visit counts";
        t += if o.wnodf {
            " (the wnodf column uses them)\n"
        } else {
            "; --wnodf adds contributions to WNODF\n"
        };
    }
    let all: Vec<&SpeciesRecord> = a.species.iter().collect();
    if all.len() <= 2 * SHOWN {
        t += "\nall species, by contribution:\n";
        t += &rows(&all, o.wnodf);
    } else {
        t += &format!("\nthe {SHOWN} species that add most to nestedness:\n");
        t += &rows(&all[..SHOWN], o.wnodf);
        let defined: Vec<&SpeciesRecord> = all
            .iter()
            .copied()
            .filter(|s| s.contribution.is_some())
            .collect();
        let tail = &defined[defined.len().saturating_sub(SHOWN)..];
        t += &format!(
            "\nthe {} species that add least (or work against it):\n",
            tail.len()
        );
        t += &rows(tail, o.wnodf);
        let undefined = all.len() - defined.len();
        if undefined > 0 {
            t += &format!("({undefined} species with an undefined contribution are listed last in json/csv)\n");
        }
        t += &format!(
            "({} species in all; --format csv or json lists every one)\n",
            all.len()
        );
    }
    t += &format!(
        "\nHow to read: contribution = (NODF - mean NODF with only this species' links re-drawn) / sd;\n\
         above 0 the species makes the network more nested than its re-drawn versions, below 0 less.\n\
         leave-one-out = NODF without the species minus NODF (partners left with no link dropped).\n\
         idiosyncratic T = the species' share of the packed temperature (the mean over each side is T); high = out of pattern.\n\
         role: \"breaks the pattern\" when contribution <= -{ROLE_Z}; otherwise \"core\" when its degree is above\n\
         the median of its side, else \"nested inside\".\n"
    );
    t
}
