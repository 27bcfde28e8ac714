//! Builds a small network in code and prints its NODF and WNODF.
//!
//! The numbers are invented for the example: visits of four insect species
//! (columns) to three plants (rows).
//!
//! Run with `cargo run --example in_code`.

use ndarray::array;
use nidus::metrics::{nodf, wnodf, Order};
use nidus::Network;

fn main() -> Result<(), nidus::Error> {
    let visits = array![
        [12.0, 7.0, 3.0, 1.0], // a generalist plant
        [5.0, 2.0, 0.0, 0.0],
        [1.0, 0.0, 0.0, 0.0], // a specialist: its one visitor is the commonest
    ];
    let plants = vec!["Gentiana".to_string(), "Silene".into(), "Primula".into()];
    let insects = vec![
        "Bombus".to_string(),
        "Syrphus".into(),
        "Andrena".into(),
        "Zygaena".into(),
    ];
    let net = Network::from_dense(visits, plants, insects)?;

    for order in [Order::Sorted, Order::Given] {
        let n = nodf(&net, order)?;
        let w = wnodf(&net, order)?;
        println!(
            "{order:>6} order: NODF {:.2} (rows {:.2}, columns {:.2}); WNODF {:.2}",
            n.total,
            n.rows.unwrap_or(f64::NAN),
            n.cols.unwrap_or(f64::NAN),
            w.total
        );
    }
    Ok(())
}
