//! Draws the figures of the invented demo data shown in the README into
//! `docs/figures/` (or the folder given): the count matrix of the meadow,
//! the presence matrix of the islands, the meadow's null distributions and
//! the change in NODF when each meadow plant is left out. `tests/figures.rs`
//! draws them again and checks that the committed files are up to date.
//!
//! Usage: `cargo run --example demo_figures [-- OUT_DIR]`.

use std::path::Path;

use nidus::figures::{
    contributions_figure, matrix_figure, null_figure, MatrixFigureOptions, NullPanel,
};
use nidus::index::IndexKind;
use nidus::io::{read_network, ReadOptions};
use nidus::measure::{measure, MeasureOptions};
use nidus::metrics::{nodf, Order};
use nidus::null::{run_null, NullConfig, NullModel};
use nidus::Network;

/// Every demo figure as (file name, SVG text).
pub fn demo_figures(data: &Path) -> nidus::Result<Vec<(String, String)>> {
    let read = ReadOptions::default();
    let meadow = read_network(&data.join("meadow_visits.csv"), &read)?;
    let islands = read_network(&data.join("islands_presence.csv"), &read)?;
    let mut out = Vec::new();

    let m = measure(&meadow, &MeasureOptions::default())?;
    let opts = MatrixFigureOptions {
        title: "Invented alpine meadow: visits of 26 visitors to 20 plants".into(),
        row_name: "plants".into(),
        col_name: "flower visitors".into(),
        weight_name: "visits".into(),
    };
    out.push((
        "meadow_matrix.svg".into(),
        matrix_figure(&meadow, &m, &opts)?.to_svg(),
    ));

    let m = measure(&islands, &MeasureOptions::default())?;
    let opts = MatrixFigureOptions {
        title: "Invented islands: land snails present on 10 islands".into(),
        row_name: "islands".into(),
        col_name: "snail species".into(),
        weight_name: String::new(),
    };
    out.push((
        "islands_matrix.svg".into(),
        matrix_figure(&islands, &m, &opts)?.to_svg(),
    ));

    let mut panels = Vec::new();
    for model in [NullModel::Equiprobable, NullModel::FixedBoth] {
        let config = NullConfig::new(
            model,
            vec![IndexKind::named("nodf")?, IndexKind::named("temperature")?],
            499,
            2024,
        );
        panels.extend(NullPanel::from_run(&run_null(&meadow, &config)?)?);
    }
    out.push((
        "meadow_null.svg".into(),
        null_figure(
            &panels,
            "Invented alpine meadow: observed against 499 null networks",
        )?
        .to_svg(),
    ));

    // Leave-one-out: NODF of the meadow minus NODF without plant i.
    let all = nodf(&meadow, Order::Sorted)?.total;
    let w = meadow.to_dense()?;
    let mut values = Vec::new();
    for i in 0..meadow.nrows() {
        let rows: Vec<usize> = (0..meadow.nrows()).filter(|&r| r != i).collect();
        let without = Network::from_array(w.select(ndarray::Axis(0), &rows))?;
        values.push(all - nodf(&without, Order::Sorted)?.total);
    }
    out.push((
        "meadow_plants.svg".into(),
        contributions_figure(
            meadow.row_labels(),
            &values,
            "NODF of the meadow minus NODF without the plant",
            "Invented alpine meadow: what each plant adds to NODF",
        )?
        .to_svg(),
    ));
    Ok(out)
}

#[allow(dead_code)]
fn main() -> std::process::ExitCode {
    let dir = std::env::args()
        .nth(1)
        .unwrap_or_else(|| "docs/figures".into());
    let run = || -> nidus::Result<()> {
        std::fs::create_dir_all(&dir).map_err(|source| nidus::Error::Write {
            path: dir.clone().into(),
            source,
        })?;
        for (name, svg) in demo_figures(Path::new("data-demo"))? {
            let path = Path::new(&dir).join(name);
            std::fs::write(&path, svg).map_err(|source| nidus::Error::Write {
                path: path.clone(),
                source,
            })?;
            println!("{}", path.display());
        }
        Ok(())
    };
    match run() {
        Ok(()) => std::process::ExitCode::SUCCESS,
        Err(e) => {
            eprintln!("demo_figures: {e}");
            std::process::ExitCode::from(2)
        }
    }
}
