//! An open dataset: the women-by-events attendance table of Davis, Gardner &
//! Gardner (1941), as carried by networkx 3.6.1 (see `tests/data/README.md`).
//! NODF from the library is checked against a slow pair-by-pair reference
//! written here from METHODS.md §1 (Almeida-Neto et al. 2008, Oikos
//! 117:1227-1239).

use std::path::Path;

use nidus::io::{read_network, ReadOptions};
use nidus::metrics::{nodf, Order};

/// Slow NODF of one side, straight from the definition: `rows[k]` is the set
/// of partners of member `k`. In `sorted` order members go by decreasing
/// degree with ties in input order (a stable sort); each pair (earlier
/// upper `u`, later lower `l`) scores `100 |N(u) ∩ N(l)| / d_l` when
/// `d_u > d_l` and `d_l > 0`, else 0. Returns (sum of pair values, pairs).
fn slow_side(rows: &[Vec<bool>], order: Order) -> (f64, usize) {
    let deg = |r: &Vec<bool>| r.iter().filter(|&&b| b).count();
    let mut ord: Vec<usize> = (0..rows.len()).collect();
    if order == Order::Sorted {
        ord.sort_by_key(|&k| std::cmp::Reverse(deg(&rows[k])));
    }
    let mut sum = 0.0;
    let mut pairs = 0;
    for a in 0..ord.len() {
        for b in a + 1..ord.len() {
            pairs += 1;
            let (u, l) = (&rows[ord[a]], &rows[ord[b]]);
            let (du, dl) = (deg(u), deg(l));
            if du > dl && dl > 0 {
                let shared = u.iter().zip(l).filter(|(&x, &y)| x && y).count();
                sum += 100.0 * shared as f64 / dl as f64;
            }
        }
    }
    (sum, pairs)
}

#[test]
fn davis_table_reads_and_nodf_matches_the_slow_reference() {
    let path = Path::new(env!("CARGO_MANIFEST_DIR")).join("tests/data/davis_southern_women.csv");
    let net = read_network(&path, &ReadOptions::default()).unwrap();
    // 18 women, 14 events, 89 ties (Davis, Gardner & Gardner 1941; networkx
    // reports 89 edges for davis_southern_women_graph()).
    assert_eq!((net.nrows(), net.ncols(), net.links()), (18, 14, 89));
    assert_eq!(net.row_labels()[0], "Evelyn Jefferson");
    assert_eq!(net.col_labels()[13], "E14");
    assert!(!net.is_weighted());

    let rows: Vec<Vec<bool>> = (0..18)
        .map(|i| (0..14).map(|j| net.get(i, j) > 0.0).collect())
        .collect();
    let cols: Vec<Vec<bool>> = (0..14)
        .map(|j| (0..18).map(|i| net.get(i, j) > 0.0).collect())
        .collect();
    for order in [Order::Sorted, Order::Given] {
        let fast = nodf(&net, order).unwrap();
        let (rs, rp) = slow_side(&rows, order);
        let (cs, cp) = slow_side(&cols, order);
        let close = |a: f64, b: f64| (a - b).abs() <= 1e-12;
        assert!(
            close(fast.rows.unwrap(), rs / rp as f64),
            "{order}: {fast:?}"
        );
        assert!(
            close(fast.cols.unwrap(), cs / cp as f64),
            "{order}: {fast:?}"
        );
        assert!(
            close(fast.total, (rs + cs) / (rp + cp) as f64),
            "{order}: {fast:?}"
        );
        // The reference is not trivially zero or 100 on this table.
        assert!(fast.total > 1.0 && fast.total < 99.0, "{order}: {fast:?}");
        println!("{order}: {fast:?}");
    }
}

/// Every index of `measure` on the Davis table; the spectral radius equals
/// the largest singular value from nalgebra's SVD (a general-purpose
/// linear-algebra library; METHODS.md §3: rho of the bipartite adjacency is
/// the largest singular value of W), and the isocline and temperature
/// obey their published bounds.
#[test]
fn davis_table_every_index() {
    use nidus::measure::{measure, MeasureOptions};
    let path = Path::new(env!("CARGO_MANIFEST_DIR")).join("tests/data/davis_southern_women.csv");
    let net = read_network(&path, &ReadOptions::default()).unwrap();
    let m = measure(&net, &MeasureOptions::default()).unwrap();
    assert!(
        m.nodf.is_some() && m.wnodf.is_none(),
        "binary table: WNODF not reported"
    );

    let w = nalgebra::DMatrix::from_fn(18, 14, |i, j| net.get(i, j));
    let sigma = w.singular_values().max();
    let r = m.spectral_radius.unwrap();
    assert!(
        (r.binary - sigma).abs() <= 1e-9 * sigma,
        "{} vs {sigma}",
        r.binary
    );
    assert_eq!(r.weighted, r.binary);
    // sqrt(max degree) <= rho <= sqrt(L) (METHODS.md §3).
    let max_deg = *net
        .row_degrees()
        .iter()
        .chain(net.col_degrees())
        .max()
        .unwrap() as f64;
    assert!(max_deg.sqrt() <= r.binary && r.binary <= 89f64.sqrt());
    assert!((r.binary_normalized - r.binary / 89f64.sqrt()).abs() < 1e-15);

    let t = m.temperature.unwrap();
    let packed = t.packed.unwrap();
    assert!(packed <= t.sorted + 1e-12 && packed >= 0.0);
    // Fill 89/252 < 1/2, so the isocline bends beyond the anti-diagonal: p > 1
    // (METHODS.md §4: area decreasing in p, p = 1 at fill 1/2).
    assert!(t.isocline_p > 1.0);
    let mut rows = t.row_order.clone();
    rows.sort_unstable();
    assert_eq!(rows, (0..18).collect::<Vec<_>>());

    // Discrepancy from METHODS.md §5, counted here: columns by decreasing
    // degree (stable), ones of row i at positions >= d_i.
    let cd = net.col_degrees();
    let mut cols: Vec<usize> = (0..14).collect();
    cols.sort_by_key(|&j| std::cmp::Reverse(cd[j]));
    let brute: usize = (0..18)
        .map(|i| {
            let d = net.row_degrees()[i];
            (0..14)
                .filter(|&p| p >= d && net.get(i, cols[p]) > 0.0)
                .count()
        })
        .sum();
    assert_eq!(m.discrepancy.map(|d| d.rows.stable), Some(brute));
}
