//! `nidus effort`: rarefaction of a visit-count network, interaction
//! richness and completeness (library: `nidus::analyses::effort`).

use std::io::{self, IsTerminal};
use std::path::PathBuf;
use std::process::ExitCode;

use clap::Args;
use indicatif::{ProgressBar, ProgressStyle};
use nidus::analyses::effort::{
    run_effort_with_progress, Band, DepthSummary, EffortConfig, EffortNull, EffortResult, Richness,
    DEFAULT_DRAWS,
};
use nidus::index::IndexKind;
use nidus::io::read_network;
use nidus::null::NullModel;
use nidus::{Error, Order};
use serde_json::{Map, Value};

use super::numbers::num;
use super::{csv_field, emit, parse_list, Format, LayoutArgs, List};

#[derive(Args, Debug)]
pub struct EffortArgs {
    /// A visit-count network file (see README for the two layouts).
    #[arg(value_name = "FILE")]
    file: PathBuf,
    /// Visits per subsample, comma-separated and increasing (default: 10 evenly spaced
    /// depths up to the total, round(i N / 10)).
    #[arg(long, value_name = "LIST", value_delimiter = ',')]
    depths: Option<Vec<u64>>,
    /// Subsamples per depth.
    #[arg(long, default_value_t = DEFAULT_DRAWS, value_name = "R")]
    draws: usize,
    /// Seed: subsample k at depth d depends on (seed, d, k) alone.
    #[arg(long, required = true, value_name = "S")]
    seed: u64,
    /// Indices computed on every subsample, comma-separated: any index of `nidus null --index`
    /// (nodf, nodf-rows, nodf-cols, wnodf, temperature, temperature-sorted, spectral,
    /// spectral-weighted, discrepancy, ...).
    #[arg(long, alias = "indices", default_value = "nodf,wnodf,spectral,spectral-weighted", value_name = "LIST",
          value_parser = parse_list::<IndexKind>)]
    index: List<IndexKind>,
    /// Multiply every value by F to get whole visit counts (for tables of rates or
    /// proportions); the products must be whole numbers.
    #[arg(long, value_name = "F")]
    scale: Option<f64>,
    /// Test NODF of subsamples against this null model at each depth.
    #[arg(long, value_name = "MODEL")]
    null_model: Option<NullModel>,
    /// Null draws per test (with --null-model).
    #[arg(long, default_value_t = 99, value_name = "R0")]
    null_draws: usize,
    /// Subsamples tested per depth: the first K (with --null-model).
    #[arg(long, default_value_t = 20, value_name = "K")]
    null_subsamples: usize,
    /// Row and column order for NODF and WNODF: sorted or given.
    #[arg(long, default_value = "sorted", value_name = "sorted|given")]
    order: Order,
    #[command(flatten)]
    input: LayoutArgs,
    /// Output format.
    #[arg(long, value_enum, default_value_t = Format::Text)]
    format: Format,
    /// Write a figure (links and each index against visits, with the 2.5-97.5 % band of
    /// the subsamples) as SVG to PATH.
    #[arg(long, value_name = "PATH")]
    svg: Option<PathBuf>,
}

/// Significance level of the per-depth null tests.
const ALPHA: f64 = 0.05;

fn progress_bar(total: usize, label: &str) -> ProgressBar {
    if !io::stderr().is_terminal() {
        return ProgressBar::hidden();
    }
    let bar = ProgressBar::new(total as u64);
    if let Ok(style) =
        ProgressStyle::with_template("{msg} [{bar:30}] {pos}/{len} subsamples, eta {eta}")
    {
        bar.set_style(style.progress_chars("=> "));
    }
    bar.set_message(label.to_string());
    bar
}

pub fn run(args: EffortArgs) -> nidus::Result<ExitCode> {
    let shown = args.file.display().to_string();
    let net = read_network(&args.file, &args.input.read_options())?;
    let mut config = EffortConfig::new(args.seed);
    config.depths = args.depths.clone();
    config.draws = args.draws;
    config.indices = args.index.0.clone();
    config.order = args.order;
    config.scale = args.scale;
    config.null = args.null_model.map(|model| EffortNull {
        model,
        draws: args.null_draws,
        subsamples: args.null_subsamples,
        alpha: ALPHA,
    });
    let bar = progress_bar(0, &shown);
    let result = run_effort_with_progress(&net, &config, &|done, all| {
        bar.set_length(all as u64);
        bar.set_position(done as u64);
    })
    .map_err(|e| match e {
        Error::InvalidArgument(m) => Error::InvalidArgument(format!("{shown}: {m}")),
        e => e,
    });
    bar.finish_and_clear();
    let result = result?;
    let text = match args.format {
        Format::Json => json_lines(&shown, &result),
        Format::Csv => csv_table(&shown, &result),
        Format::Text => text_report(&shown, &result, args.order),
    };
    emit(&mut io::stdout().lock(), &text);
    if let Some(path) = &args.svg {
        figure(path, &shown, &result)?;
    }
    Ok(ExitCode::SUCCESS)
}

/// `--svg`: a panel for links and one per index, each against visits with
/// the 2.5-97.5 % band; a quantity undefined at every depth is left out
/// with a note.
fn figure(path: &std::path::Path, shown: &str, r: &EffortResult) -> nidus::Result<()> {
    use nidus::figures::{effort_panels_figure, EffortPanel, EffortPoint};
    let mut keys = vec![("links".to_string(), "links observed".to_string())];
    for &k in &r.indices {
        let name = match k.name() {
            "nodf" => "NODF".to_string(),
            "wnodf" => "WNODF".to_string(),
            "temperature" => "temperature T (packed)".to_string(),
            "spectral" => "spectral radius".to_string(),
            "spectral-weighted" => "spectral radius of the visits".to_string(),
            other => other.to_string(),
        };
        keys.push((EffortResult::key(k), name));
    }
    let mut panels = Vec::new();
    for (key, name) in keys {
        let Some(c) = r.curve(&key) else { continue };
        if c.x.is_empty() {
            eprintln!("nidus: {shown}: {name} is undefined at every depth; left out of the figure");
            continue;
        }
        let points = (0..c.x.len())
            .map(|i| EffortPoint {
                x: c.x[i],
                mean: c.mean[i],
                low: c.low[i],
                high: c.high[i],
            })
            .collect();
        panels.push(EffortPanel { name, points });
    }
    let fig = effort_panels_figure(
        &panels,
        "visits in the subsample",
        &format!(
            "2.5-97.5 % of {} subsamples per depth (seed {}){}",
            r.draws,
            r.seed,
            if r.depths.last().is_some_and(|d| d.depth == r.visits) {
                format!("; the last point is all {} visits", r.visits)
            } else {
                String::new()
            }
        ),
        &format!("{shown}: indices against sampling effort"),
    )?;
    fig.save(path)?;
    eprintln!("nidus: figure written to {}", path.display());
    Ok(())
}

/// The quantities of a depth in output order: key and band.
fn quantities(r: &EffortResult, d: &DepthSummary) -> Vec<(String, Band)> {
    let mut q = vec![
        ("links".to_string(), d.links),
        ("rows_observed".to_string(), d.rows_observed),
        ("cols_observed".to_string(), d.cols_observed),
    ];
    for (k, b) in r.indices.iter().zip(&d.indices) {
        q.push((EffortResult::key(*k), *b));
    }
    if let Some(n) = &d.null {
        q.push(("null_z".to_string(), n.z));
    }
    q
}

fn opt(x: Option<f64>) -> Value {
    x.map_or(Value::Null, Value::from)
}

fn band_json(b: &Band) -> Value {
    let mut o = Map::new();
    o.insert("mean".into(), opt(b.mean));
    o.insert("q025".into(), opt(b.q025));
    o.insert("q50".into(), opt(b.q50));
    o.insert("q975".into(), opt(b.q975));
    o.insert("defined".into(), b.defined.into());
    Value::Object(o)
}

/// The network-level keys, repeated on every line: (key, value).
fn network_keys(r: &EffortResult) -> Vec<(String, Value)> {
    let mut v: Vec<(String, Value)> = vec![
        ("visits".into(), r.visits.into()),
        ("observed_links".into(), r.links.into()),
        ("chao1".into(), r.interactions.chao1.into()),
        ("chao1_se".into(), r.interactions.se.into()),
        ("completeness".into(), r.interactions.completeness.into()),
        ("coverage".into(), r.coverage.into()),
        ("singletons".into(), r.interactions.singletons.into()),
        ("doubletons".into(), r.interactions.doubletons.into()),
    ];
    for (side, s) in [("rows", &r.row_species), ("cols", &r.col_species)] {
        v.push((side.to_string(), s.observed.into()));
        v.push((format!("{side}_chao1"), s.chao1.into()));
        v.push((format!("{side}_chao1_se"), s.se.into()));
        v.push((format!("{side}_completeness"), s.completeness.into()));
    }
    v.push(("draws".into(), r.draws.into()));
    v.push(("seed".into(), r.seed.into()));
    v.push(("scale".into(), opt(r.scale)));
    if let Some(n) = &r.null {
        v.push(("null_model".into(), n.model.name().into()));
        v.push(("null_draws".into(), n.draws.into()));
    }
    v
}

fn json_lines(file: &str, r: &EffortResult) -> String {
    let mut s = String::new();
    for d in &r.depths {
        let mut o = Map::new();
        o.insert("file".into(), file.into());
        o.insert("depth".into(), d.depth.into());
        o.insert("fraction".into(), d.fraction.into());
        o.insert("expected_links".into(), d.expected_links.into());
        for (k, v) in network_keys(r) {
            o.insert(k, v);
        }
        for (k, b) in quantities(r, d) {
            o.insert(k, band_json(&b));
        }
        if let Some(n) = &d.null {
            o.insert("null_significant_share".into(), opt(n.significant_share));
            o.insert("null_tests".into(), n.tests.into());
        }
        s += &Value::Object(o).to_string();
        s.push('\n');
    }
    s
}

fn csv_value(v: &Value) -> String {
    match v {
        Value::Null => String::new(),
        Value::String(t) => csv_field(t),
        v => v.to_string(),
    }
}

fn csv_table(file: &str, r: &EffortResult) -> String {
    let mut s = String::new();
    for (i, d) in r.depths.iter().enumerate() {
        let line = json_lines(
            file,
            &EffortResult {
                depths: vec![d.clone()],
                ..r.clone()
            },
        );
        let v: Value = serde_json::from_str(line.trim()).unwrap_or(Value::Null);
        let Value::Object(o) = v else { continue };
        let mut keys = Vec::new();
        let mut vals = Vec::new();
        for (k, v) in &o {
            match v {
                Value::Object(inner) => {
                    for (k2, v2) in inner {
                        keys.push(format!("{k}_{k2}"));
                        vals.push(csv_value(v2));
                    }
                }
                v => {
                    keys.push(k.clone());
                    vals.push(csv_value(v));
                }
            }
        }
        if i == 0 {
            s += &keys.join(",");
            s.push('\n');
        }
        s += &vals.join(",");
        s.push('\n');
    }
    s
}

fn f(x: Option<f64>) -> String {
    x.map_or("-".to_string(), num)
}

fn band_text(b: &Band) -> String {
    match (b.mean, b.q025, b.q975) {
        (Some(m), Some(lo), Some(hi)) => {
            format!("{} [{}, {}]", f(Some(m)), f(Some(lo)), f(Some(hi)))
        }
        _ => "-".to_string(),
    }
}

fn richness_line(what: &str, r: &Richness) -> String {
    format!(
        "  {what:<22} {:>6} seen, Chao1 {} (se {}{}), completeness {} %\n",
        r.observed,
        num(r.chao1),
        num(r.se),
        if r.bias_corrected {
            ", bias-corrected form: no doubletons"
        } else {
            ""
        },
        num(100.0 * r.completeness)
    )
}

fn text_report(file: &str, r: &EffortResult, order: Order) -> String {
    let mut s = format!(
        "{file}\n  {} visits, {} links between {} row and {} column species{}\n",
        r.visits,
        r.links,
        r.rows,
        r.cols,
        r.scale
            .map_or(String::new(), |f| format!(" (values x {f})"))
    );
    if r.rows_without_visits + r.cols_without_visits > 0 {
        s += &format!(
            "  left out: {} row and {} column species without any visit\n",
            r.rows_without_visits, r.cols_without_visits
        );
    }
    s += &richness_line("interactions", &r.interactions);
    s += &richness_line("row species", &r.row_species);
    s += &richness_line("column species", &r.col_species);
    s += &format!(
        "  interactions seen once {}, twice {}; sample coverage 1 - f1/N = {}\n",
        r.interactions.singletons,
        r.interactions.doubletons,
        num(r.coverage)
    );
    s += &format!(
        "\n  rarefaction: {} subsamples per depth without replacement, seed {}; species without a visit in a \
         subsample are dropped before its indices are computed. Cells: mean [2.5 %, 97.5 %] over the subsamples.\n",
        r.draws, r.seed
    );
    s += &format!("  order {} (for NODF and WNODF)\n", order.name());
    let mut head = format!(
        "  {:>8} {:>5} {:>9} {:>22}",
        "visits", "%", "E[links]", "links"
    );
    head += &format!(" {:>20} {:>20}", "rows seen", "cols seen");
    for k in &r.indices {
        head += &format!(" {:>24}", k.name());
    }
    if let Some(n) = &r.null {
        head += &format!(" {:>22} {:>8}", format!("z vs {}", n.model), "p<=0.05");
    }
    s += &head;
    s.push('\n');
    for d in &r.depths {
        let mut line = format!(
            "  {:>8} {:>5.0} {:>9} {:>22}",
            d.depth,
            100.0 * d.fraction,
            num(d.expected_links),
            band_text(&d.links)
        );
        line += &format!(
            " {:>20} {:>20}",
            band_text(&d.rows_observed),
            band_text(&d.cols_observed)
        );
        for b in &d.indices {
            line += &format!(" {:>24}", band_text(b));
        }
        if let Some(n) = &d.null {
            line += &format!(
                " {:>22} {:>8}",
                band_text(&n.z),
                n.significant_share
                    .map_or("-".into(), |p| format!("{:.0} %", 100.0 * p))
            );
        }
        s += &line;
        s.push('\n');
    }
    s += &reading(r);
    s.push('\n');
    s
}

/// A plain reading of the numbers.
fn reading(r: &EffortResult) -> String {
    let mut s = String::from("\n  Reading:\n");
    let c = &r.interactions;
    s += &format!(
        "  - About {:.0} % of the interactions estimated by Chao1 were recorded ({} of {:.0}). ",
        100.0 * c.completeness,
        r.links,
        c.chao1
    );
    s += &format!(
        "A further visit would show an interaction not yet seen with probability about {} (f1/N).\n",
        num(1.0 - r.coverage)
    );
    if let [.., prev, last] = r.depths.as_slice() {
        let added = last.expected_links - prev.expected_links;
        let per = 100.0 * added / (last.depth - prev.depth) as f64;
        s += &format!(
            "  - The last {} visits added {} links on average ({} per 100 visits): {}\n",
            last.depth - prev.depth,
            num(added),
            num(per),
            if per < 1.0 {
                "the link curve is flattening."
            } else {
                "the link curve is still rising; more effort would add links."
            }
        );
    }
    for &k in &r.indices {
        let key = EffortResult::key(k);
        let full = r.depths.last().and_then(|d| {
            let i = r.indices.iter().position(|&x| x == k)?;
            d.indices[i].mean
        });
        let Some(full) = full else { continue };
        if k.name() == "spectral-weighted" {
            s += &format!(
                "  - {}: {} at full effort; it is in units of visits and grows with them by \
                 construction, so compare it only between networks at the same depth.\n",
                k.name(),
                num(full)
            );
            continue;
        }
        match r.levels_off_at(&key) {
            Some(d) if Some(d) == r.depths.first().map(|x| x.depth) => {
                s += &format!(
                "  - {}: the full-effort value {} lies within the subsample range at every depth \
                     down to {d} visits: it does not hinge on effort over this range.\n",
                k.name(),
                num(full)
            )
            }
            Some(d) if d < r.visits => {
                s += &format!(
                "  - {}: the full-effort value {} lies within the subsample range from {d} visits \
                     ({:.0} % of the effort) on; below that the index still drifts with effort.\n",
                k.name(),
                num(full),
                100.0 * d as f64 / r.visits as f64
            )
            }
            _ => {
                s += &format!(
                "  - {}: the full-effort value {} lies outside the subsample range of the depth \
                     just below it: the index still changes with effort.\n",
                k.name(),
                num(full)
            )
            }
        }
    }
    if let (Some(n), Some(first), Some(last)) = (&r.null, r.depths.first(), r.depths.last()) {
        if let (Some(p0), Some(p1)) = (
            first.null.and_then(|x| x.significant_share),
            last.null.and_then(|x| x.significant_share),
        ) {
            s += &format!(
                "  - NODF against {}: more nested than chance (p <= 0.05) in {:.0} % of the tested subsamples \
                 at {} visits and {:.0} % at {} visits; a conclusion that holds at every depth does not \
                 hinge on effort.\n",
                n.model,
                100.0 * p0,
                first.depth,
                100.0 * p1,
                last.depth
            );
        }
    }
    s
}
