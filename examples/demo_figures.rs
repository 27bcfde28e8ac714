//! Draws the figures of the invented demo data shown in the README into
//! `docs/figures/` (or the folder given): the count matrix of the meadow,
//! the presence matrix of the islands, the meadow's null distributions and
//! the change in NODF when each meadow plant is left out, the contribution
//! of every meadow species to NODF (as `nidus species --svg`), the meadow's
//! indices against the number of visits (as `nidus effort --svg`) and the
//! rejection rates of NODF on networks shaped like the meadow (as `nidus
//! assess --svg`), with small draw counts so that this runs in seconds.
//! `tests/figures.rs`
//! draws them again and checks that the committed files are up to date.
//!
//! Usage: `cargo run --example demo_figures [-- OUT_DIR]`.

use std::path::Path;

use nidus::analyses::assess::{power_curve, run_assess, AssessConfig, Scenario, Shape};
use nidus::analyses::effort::{run_effort, EffortConfig};
use nidus::analyses::species::{species_contributions, SpeciesOptions};
use nidus::figures::{
    contributions_figure, effort_panels_figure, matrix_figure, null_figure, rejection_figure,
    EffortPanel, EffortPoint, MatrixFigureOptions, NullPanel, RejectionPoint, RejectionSeries,
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

    // Contribution of every species to NODF (199 re-draws each).
    let a = species_contributions(
        &meadow,
        &SpeciesOptions {
            draws: 199,
            seed: 2024,
            ..SpeciesOptions::default()
        },
    )?;
    let defined: Vec<_> = a
        .species
        .iter()
        .filter(|s| s.contribution.is_some())
        .collect();
    out.push((
        "meadow_species.svg".into(),
        contributions_figure(
            &defined
                .iter()
                .map(|s| format!("{} ({})", s.label, s.side.name()))
                .collect::<Vec<_>>(),
            &defined.iter().filter_map(|s| s.contribution).collect::<Vec<_>>(),
            "contribution z (right of 0: more nested than its re-draws)",
            "Invented alpine meadow: contribution of each species to NODF (199 re-draws, proportional)",
        )?
        .to_svg(),
    ));

    // Links, NODF and WNODF against the number of visits (50 subsamples).
    let mut config = EffortConfig::new(2024);
    config.draws = 50;
    config.indices = vec![IndexKind::named("nodf")?, IndexKind::named("wnodf")?];
    let e = run_effort(&meadow, &config)?;
    let mut panels = Vec::new();
    for (key, name) in [
        ("links", "links observed"),
        ("nodf", "NODF"),
        ("wnodf", "WNODF"),
    ] {
        let c = e.curve(key).expect("a computed quantity");
        panels.push(EffortPanel {
            name: name.into(),
            points: (0..c.x.len())
                .map(|i| EffortPoint {
                    x: c.x[i],
                    mean: c.mean[i],
                    low: c.low[i],
                    high: c.high[i],
                })
                .collect(),
        });
    }
    out.push((
        "meadow_effort.svg".into(),
        effort_panels_figure(
            &panels,
            "visits in the subsample",
            &format!(
                "2.5-97.5 % of 50 subsamples per depth (seed 2024); the last point is all {} visits",
                e.visits
            ),
            "Invented alpine meadow: indices against sampling effort",
        )?
        .to_svg(),
    ));

    // Rejection rates of NODF on networks shaped like the meadow.
    let models = [
        NullModel::Equiprobable,
        NullModel::FixedRows,
        NullModel::FixedBoth,
    ];
    let nodf_kind = IndexKind::named("nodf")?;
    let config = AssessConfig::new(
        Shape::like(&meadow, "meadow_visits.csv")?,
        vec![
            Scenario::Random,
            Scenario::Degrees,
            Scenario::Nested(0.0),
            Scenario::Nested(0.25),
            Scenario::Nested(0.5),
            Scenario::Nested(0.75),
            Scenario::Nested(1.0),
        ],
        vec![nodf_kind],
        models.to_vec(),
        40,
        39,
        2024,
    );
    let rows = run_assess(&config, &|_| {})?.summarise()?;
    let series = models
        .iter()
        .map(|&m| {
            let others: Vec<String> = rows
                .iter()
                .filter(|r| r.model == m && r.scenario.strength().is_none())
                .map(|r| format!("{} {:.2}", r.scenario.name(), r.rate))
                .collect();
            RejectionSeries {
                name: format!("nodf against {} (type I: {})", m.name(), others.join(", ")),
                points: power_curve(&rows, nodf_kind, m)
                    .into_iter()
                    .map(|p| RejectionPoint {
                        strength: p.strength,
                        rate: p.rate,
                        low: p.low,
                        high: p.high,
                    })
                    .collect(),
            }
        })
        .collect::<Vec<_>>();
    out.push((
        "meadow_assess.svg".into(),
        rejection_figure(
            &series,
            0.05,
            "planted nestedness S (nested:S; 0 = random)",
            "Rejection rates: networks shaped like the invented meadow, 40 per scenario, 39 null draws each; whiskers: 95 % Wilson interval",
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
