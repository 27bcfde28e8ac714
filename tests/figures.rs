//! Figures rendered to bitmaps with resvg: what should be drawn is drawn,
//! where it should be. Text is not rendered (resvg is built without fonts),
//! so these checks read shapes and colours only.

use ndarray::array;
use nidus::figures::{
    contributions_figure, effort_figure, matrix_figure, null_figure, rejection_figure, style,
    EffortPoint, MatrixFigureOptions, NullPanel, RejectionPoint, RejectionSeries,
};
use nidus::index::IndexKind;
use nidus::measure::{measure, Family, MeasureOptions};
use nidus::null::{run_null, NullConfig, NullModel};
use nidus::Network;
use resvg::{tiny_skia, usvg};

#[path = "../examples/demo_figures.rs"]
#[allow(dead_code)]
mod demo_figures;

/// Renders an SVG at scale 1 into RGBA pixels.
fn render(svg: &str) -> tiny_skia::Pixmap {
    let tree = usvg::Tree::from_str(svg, &usvg::Options::default()).expect("valid SVG");
    let size = tree.size().to_int_size();
    let mut pix = tiny_skia::Pixmap::new(size.width(), size.height()).unwrap();
    resvg::render(&tree, tiny_skia::Transform::default(), &mut pix.as_mut());
    pix
}

fn rgb(pix: &tiny_skia::Pixmap, x: f64, y: f64) -> [u8; 3] {
    let p = pix.pixel(x.round() as u32, y.round() as u32).unwrap();
    [p.red(), p.green(), p.blue()]
}

fn hex(c: &str) -> [u8; 3] {
    let v = u32::from_str_radix(c.trim_start_matches('#'), 16).unwrap();
    [(v >> 16) as u8, (v >> 8) as u8, v as u8]
}

fn close(a: [u8; 3], b: [u8; 3], tol: i32) -> bool {
    (0..3).all(|k| (a[k] as i32 - b[k] as i32).abs() <= tol)
}

/// The value of attribute `name` in the first element holding `marker`.
fn attr(svg: &str, marker: &str, name: &str) -> f64 {
    let at = svg.find(marker).unwrap_or_else(|| panic!("no {marker}"));
    let start = svg[..at].rfind('<').unwrap();
    let end = at + svg[at..].find('>').unwrap();
    let el = &svg[start..end];
    let key = format!(" {name}=\"");
    let v = &el[el.find(&key).unwrap_or_else(|| panic!("no {name} in {el}")) + key.len()..];
    v[..v.find('"').unwrap()].parse().unwrap()
}

fn non_white(pix: &tiny_skia::Pixmap) -> usize {
    pix.pixels()
        .iter()
        .filter(|p| (p.red(), p.green(), p.blue()) != (255, 255, 255))
        .count()
}

/// An invented 6 x 8 presence table, not perfectly nested.
fn small() -> Network<f64> {
    Network::from_array(array![
        [1., 1., 1., 1., 1., 1., 0., 1.],
        [1., 1., 1., 0., 1., 0., 1., 0.],
        [1., 1., 0., 1., 0., 0., 0., 0.],
        [1., 0., 1., 0., 0., 0., 0., 0.],
        [0., 1., 0., 0., 0., 0., 0., 0.],
        [1., 0., 0., 0., 0., 0., 0., 1.],
    ])
    .unwrap()
}

#[test]
fn matrix_draws_one_cell_per_link_and_the_isocline() {
    let net = small();
    let meas = measure(&net, &MeasureOptions::default()).unwrap();
    let t = meas.temperature.clone().unwrap();
    let svg = matrix_figure(&net, &meas, &MatrixFigureOptions::default())
        .unwrap()
        .to_svg();
    assert_eq!(svg.matches("class=\"cell\"").count(), net.links());
    assert!(svg.contains("id=\"isocline\""));
    let pix = render(&svg);
    assert!(non_white(&pix) > 1000, "blank figure");

    // Every grid position: filled with the presence colour iff a link
    // (checked near the cell's top-left corner, clear of the marks).
    let (x0, y0) = (
        attr(&svg, "data-x0", "data-x0"),
        attr(&svg, "data-x0", "data-y0"),
    );
    let cw = attr(&svg, "data-x0", "data-cell-width");
    let ch = attr(&svg, "data-x0", "data-cell-height");
    let fill = hex(&style::ramp(0.8));
    let mut drawn = 0;
    for (i, &r) in t.row_order.iter().enumerate() {
        for (j, &c) in t.col_order.iter().enumerate() {
            // Four points 2 px inside the cell's corners: the isocline may
            // cross one or two of them, never all four.
            let (a, b) = (x0 + j as f64 * cw, y0 + i as f64 * ch);
            let corners = [
                (2.0, 2.0),
                (cw - 3.0, 2.0),
                (2.0, ch - 3.0),
                (cw - 3.0, ch - 3.0),
            ];
            let hits = corners
                .iter()
                .filter(|(dx, dy)| close(rgb(&pix, a + dx, b + dy), fill, 6))
                .count();
            let filled = hits >= 2;
            assert_eq!(
                filled,
                net.get(r, c) > 0.0,
                "cell ({r}, {c}) at ({i}, {j}): {hits} corners"
            );
            drawn += filled as usize;
        }
    }
    assert_eq!(drawn, net.links());

    // The isocline passes through its point at θ = π/4 of the superellipse
    // 1-x = cos(θ)^(2/p), 1-y = sin(θ)^(2/p): a dark pixel there.
    let p = t.isocline_p;
    let a = std::f64::consts::FRAC_1_SQRT_2.powf(2.0 / p);
    let (mw, mh) = (cw * net.ncols() as f64, ch * net.nrows() as f64);
    let (cx, cy) = (x0 + (1.0 - a) * mw, y0 + (1.0 - a) * mh);
    let dark = (-1..=1)
        .flat_map(|dx| (-1..=1).map(move |dy| (dx, dy)))
        .any(|(dx, dy)| {
            close(
                rgb(&pix, cx + dx as f64, cy + dy as f64),
                hex(style::INK),
                40,
            )
        });
    assert!(dark, "no isocline pixel near ({cx}, {cy})");
}

#[test]
fn marked_cells_are_exactly_those_temperature_scores() {
    // Atmar & Patterson (1993): a cell adds to T exactly when it is a
    // presence outside or an absence inside the isocline's presence region,
    // so the marks must be the cells with non-zero unexpectedness.
    use nidus::metrics::temperature::UnexpectednessTable;
    let net = small();
    let meas = measure(&net, &MeasureOptions::default()).unwrap();
    let t = meas.temperature.clone().unwrap();
    let table = UnexpectednessTable::new(net.nrows(), net.ncols(), net.links()).unwrap();
    let (mut pres, mut abs) = (0, 0);
    for (i, &r) in t.row_order.iter().enumerate() {
        for (j, &c) in t.col_order.iter().enumerate() {
            if net.get(r, c) > 0.0 {
                pres += (table.if_present(i, j) > 0.0) as usize;
            } else {
                abs += (table.if_absent(i, j) > 0.0) as usize;
            }
        }
    }
    assert!(
        pres + abs > 0,
        "the test network must have unexpected cells"
    );
    let svg = matrix_figure(&net, &meas, &MatrixFigureOptions::default())
        .unwrap()
        .to_svg();
    assert_eq!(svg.matches("class=\"unexpected-presence\"").count(), pres);
    assert_eq!(svg.matches("class=\"unexpected-absence\"").count(), abs);
}

#[test]
fn weighted_cells_follow_the_scale() {
    let net = Network::from_array(array![[9., 3.], [1., 0.]]).unwrap();
    let meas = measure(&net, &MeasureOptions::default()).unwrap();
    let svg = matrix_figure(&net, &meas, &MatrixFigureOptions::default())
        .unwrap()
        .to_svg();
    // Linear between the smallest (1) and largest (9) value: 3 sits at 1/4.
    for (v, t) in [(9.0, 1.0), (3.0, 0.25), (1.0, 0.0)] {
        let colour = style::ramp(t);
        assert!(
            svg.contains(&format!("fill=\"{colour}\"")),
            "value {v}: {colour}"
        );
    }
}

#[test]
fn large_network_is_a_bounded_density_image() {
    // 3,000 x 2,000 with 60,000 links placed by a fixed arithmetic rule.
    let (m, n) = (3000usize, 2000usize);
    let mut trip = Vec::new();
    let mut seen = std::collections::HashSet::new();
    let mut k: u64 = 1;
    while trip.len() < 60_000 {
        k = k
            .wrapping_mul(6364136223846793005)
            .wrapping_add(1442695040888963407);
        let (i, j) = ((k >> 33) as usize % m, (k >> 13) as usize % n);
        // More links towards low indices: a roughly nested pattern.
        if (i * n + j * m) < m * n * 3 / 2 && seen.insert((i, j)) {
            trip.push((i as u32, j as u32, 1.0));
        }
    }
    let rows: Vec<String> = (0..m).map(|i| format!("r{i}")).collect();
    let cols: Vec<String> = (0..n).map(|j| format!("c{j}")).collect();
    let net = Network::from_triplets(rows, cols, trip).unwrap();
    let opts = MeasureOptions::new(
        nidus::Order::Sorted,
        vec![Family::Nodf],
        nidus::metrics::TemperatureOptions::default(),
    );
    let meas = measure(&net, &opts).unwrap();
    let svg = matrix_figure(&net, &meas, &MatrixFigureOptions::default())
        .unwrap()
        .to_svg();
    assert!(svg.len() < 5_000_000, "{} bytes", svg.len());
    assert!(svg.contains("id=\"density\""));
    assert!(!svg.contains("class=\"cell\""));
    assert!(!svg.contains("id=\"isocline\""));
    assert!(svg.contains("temperature was not requested"));
    let pix = render(&svg);
    // The image is drawn: its top-left block (the densest) is not white.
    let (x, y) = (
        attr(&svg, "id=\"density\"", "x"),
        attr(&svg, "id=\"density\"", "y"),
    );
    assert_ne!(rgb(&pix, x + 1.0, y + 1.0), [255, 255, 255]);
    assert!(non_white(&pix) > 50_000);
}

#[test]
fn observed_line_sits_at_its_value() {
    let net = small();
    let config = NullConfig::new(
        NullModel::Equiprobable,
        vec![
            IndexKind::named("nodf").unwrap(),
            IndexKind::named("discrepancy").unwrap(),
        ],
        199,
        11,
    );
    let run = run_null(&net, &config).unwrap();
    let panels = NullPanel::from_run(&run).unwrap();
    let svg = null_figure(&panels, "test").unwrap().to_svg();
    assert_eq!(svg.matches("class=\"observed\"").count(), 2);
    assert!(svg.matches("class=\"bar\"").count() >= 2);
    let pix = render(&svg);
    let accent = hex(style::ACCENT);
    // First panel (nodf): expected x from its plot area and data range.
    let (px0, w) = (
        attr(&svg, "plot-area", "x"),
        attr(&svg, "plot-area", "width"),
    );
    let (lo, hi) = (
        attr(&svg, "plot-area", "data-x-min"),
        attr(&svg, "plot-area", "data-x-max"),
    );
    let (top, h) = (
        attr(&svg, "plot-area", "y"),
        attr(&svg, "plot-area", "height"),
    );
    let want = px0 + (run.observed[0] - lo) / (hi - lo) * w;
    let y = top + 0.5 * h;
    let xs: Vec<f64> = (px0 as u32..(px0 + w) as u32)
        .filter(|&x| close(rgb(&pix, x as f64, y), accent, 30))
        .map(f64::from)
        .collect();
    assert!(!xs.is_empty(), "no observed line in the first panel");
    let got = xs.iter().sum::<f64>() / xs.len() as f64 + 0.5; // pixel centres
    assert!(
        (got - want).abs() <= 1.0,
        "observed line at {got}, expected {want}"
    );
}

#[test]
fn builders_draw_their_parts() {
    let labels: Vec<String> = ["a", "b", "c", "d"].map(String::from).to_vec();
    let svg = contributions_figure(&labels, &[0.5, -1.0, 2.0, 0.0], "change", "")
        .unwrap()
        .to_svg();
    assert_eq!(svg.matches("class=\"bar\"").count(), 4);
    assert!(svg.contains("class=\"zero-line\""));
    assert!(non_white(&render(&svg)) > 500);
    // The negative bar is vermilion, the positive ones blue.
    assert_eq!(
        svg.matches(&format!("fill=\"{}\"", style::ACCENT)).count(),
        1
    );

    let pt = |s: f64, r: f64| RejectionPoint {
        strength: s,
        rate: r,
        low: (r - 0.05).max(0.0),
        high: (r + 0.05).min(1.0),
    };
    let series = vec![
        RejectionSeries {
            name: "one".into(),
            points: vec![pt(0.0, 0.05), pt(0.5, 0.4), pt(1.0, 0.9)],
        },
        RejectionSeries {
            name: "two".into(),
            points: vec![pt(0.0, 0.04), pt(1.0, 0.7)],
        },
    ];
    let svg = rejection_figure(&series, 0.05, "strength", "")
        .unwrap()
        .to_svg();
    assert_eq!(svg.matches("class=\"whisker\"").count(), 5);
    assert!(svg.contains("class=\"alpha-line\""));
    let pix = render(&svg);
    assert!(non_white(&pix) > 1000);
    // The alpha line's y maps 0.05 on a 0-1 axis: 95 % of the way down.
    let y1 = attr(&svg, "alpha-line", "y1");
    let x1 = attr(&svg, "alpha-line", "x1");
    let dark = (-1..=1).any(|d| rgb(&pix, x1 + 2.0, y1 + d as f64).iter().all(|&v| v < 180)); // a 1.2 px line over two pixel rows
    assert!(
        dark,
        "no alpha line at y = {y1}: {:?}",
        (-2..=2)
            .map(|d| rgb(&pix, x1 + 2.0, y1 + d as f64))
            .collect::<Vec<_>>()
    );
    assert!(rejection_figure(&series, 1.5, "s", "").is_err());

    let pts: Vec<EffortPoint> = (1..=8)
        .map(|k| EffortPoint {
            x: k as f64 * 50.0,
            mean: k as f64,
            low: k as f64 - 0.5,
            high: k as f64 + 0.5,
        })
        .collect();
    let svg = effort_figure(&pts, "visits", "NODF", "central 95 %", "")
        .unwrap()
        .to_svg();
    assert!(svg.contains("id=\"band\"") && svg.contains("id=\"mean-line\""));
    let pix = render(&svg);
    assert!(non_white(&pix) > 1000);
    let bad = [EffortPoint {
        x: 1.0,
        mean: 2.0,
        low: 3.0,
        high: 4.0,
    }];
    assert!(effort_figure(&bad, "x", "y", "b", "").is_err());
}

#[test]
fn committed_demo_figures_are_up_to_date() {
    let root = std::path::Path::new(env!("CARGO_MANIFEST_DIR"));
    for (name, svg) in demo_figures::demo_figures(&root.join("data-demo")).unwrap() {
        let path = root.join("docs/figures").join(&name);
        let committed = std::fs::read_to_string(&path).unwrap_or_default();
        assert!(
            committed == svg,
            "{} is out of date: run `cargo run --example demo_figures`",
            path.display()
        );
        assert!(non_white(&render(&svg)) > 1000, "{name} is blank");
    }
}

fn nidus(args: &[&str]) -> std::process::Output {
    std::process::Command::new(env!("CARGO_BIN_EXE_nidus"))
        .args(args)
        .output()
        .unwrap()
}

#[test]
fn command_line_writes_one_figure_per_file() {
    let dir = std::env::temp_dir().join(format!("nidus-figures-{}", std::process::id()));
    std::fs::create_dir_all(&dir).unwrap();
    let a = dir.join("a.csv");
    let b = dir.join("b.csv");
    std::fs::write(&a, "x,s1,s2,s3\nr1,1,1,1\nr2,1,0,0\n").unwrap();
    std::fs::write(&b, "x,s1,s2\nr1,2,1\nr2,1,0\nr3,0,3\n").unwrap();
    let base = dir.join("fig.svg");
    let (a_s, b_s, base_s) = (
        a.to_str().unwrap(),
        b.to_str().unwrap(),
        base.to_str().unwrap(),
    );
    let out = nidus(&[
        "measure",
        a_s,
        b_s,
        "--svg",
        base_s,
        "--svg-names",
        "sites,species",
    ]);
    assert!(
        out.status.success(),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );
    let fa = std::fs::read_to_string(dir.join("fig.a.svg")).unwrap();
    let fb = std::fs::read_to_string(dir.join("fig.b.svg")).unwrap();
    assert_eq!(fa.matches("class=\"cell\"").count(), 4);
    assert_eq!(fb.matches("class=\"cell\"").count(), 4);
    assert!(fa.contains("2 sites") && fa.contains("3 species"));

    // A bad option fails before any file is read; --svg needs every draw.
    let out = nidus(&["measure", a_s, "--svg", base_s, "--svg-names", "sites"]);
    assert_eq!(out.status.code(), Some(2));
    let out = nidus(&[
        "null",
        a_s,
        "--model",
        "equiprobable",
        "--seed",
        "1",
        "--shard",
        "1/2",
        "--save-draws",
        dir.join("p.tsv").to_str().unwrap(),
        "--svg",
        base_s,
    ]);
    assert_eq!(out.status.code(), Some(2));
    assert!(String::from_utf8_lossy(&out.stderr).contains("--svg needs every draw"));

    let out = nidus(&[
        "null",
        a_s,
        "--model",
        "equiprobable,fixed-rows",
        "--index",
        "nodf,discrepancy",
        "--draws",
        "49",
        "--seed",
        "3",
        "--svg",
        base_s,
    ]);
    assert!(
        out.status.success(),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );
    let f = std::fs::read_to_string(&base).unwrap();
    assert_eq!(f.matches("class=\"observed\"").count(), 4); // 2 models x 2 indices
    std::fs::remove_dir_all(&dir).unwrap();
}

/// A fresh scratch folder for one test.
fn scratch(name: &str) -> std::path::PathBuf {
    let dir = std::env::temp_dir().join(format!("nidus-{name}-{}", std::process::id()));
    std::fs::create_dir_all(&dir).unwrap();
    dir
}

/// The numbers of attribute `name` over every element of class `class`.
fn attrs(svg: &str, class: &str, name: &str) -> Vec<f64> {
    let marker = format!("class=\"{class}\"");
    let mut out = Vec::new();
    let mut from = 0;
    while let Some(k) = svg[from..].find(&marker) {
        let at = from + k;
        out.push(attr(&svg[at.saturating_sub(400)..], &marker, name));
        from = at + marker.len();
    }
    out
}

#[test]
fn species_command_draws_one_bar_per_species_from_a_zero_line() {
    let dir = scratch("species-fig");
    let file = dir.join("w.csv");
    // Invented 5 x 6 presence table with one species out of pattern (r5).
    std::fs::write(
        &file,
        "x,c1,c2,c3,c4,c5,c6\nr1,1,1,1,1,1,0\nr2,1,1,1,0,0,0\nr3,1,1,0,0,0,0\nr4,1,0,0,0,0,0\nr5,0,0,0,1,1,1\n",
    )
    .unwrap();
    let fig = dir.join("sp.svg");
    let args = [
        "species",
        file.to_str().unwrap(),
        "--seed",
        "5",
        "--draws",
        "99",
        "--format",
        "json",
    ];
    let out = nidus(&[&args[..], &["--svg", fig.to_str().unwrap()]].concat());
    assert!(
        out.status.success(),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );
    let contributions: Vec<f64> = String::from_utf8(out.stdout)
        .unwrap()
        .lines()
        .filter_map(|l| {
            let v: serde_json::Value = serde_json::from_str(l).unwrap();
            v["contribution"].as_f64()
        })
        .collect();
    assert!(contributions.len() >= 10, "{contributions:?}");
    let svg = std::fs::read_to_string(&fig).unwrap();
    // One bar per species with a defined contribution; the negative ones in
    // the accent colour, the others not.
    assert_eq!(svg.matches("class=\"bar\"").count(), contributions.len());
    let negative = contributions.iter().filter(|&&c| c < 0.0).count();
    assert!(
        negative >= 1,
        "r5 should work against nestedness: {contributions:?}"
    );
    assert_eq!(
        svg.matches(&format!("fill=\"{}\"", style::ACCENT)).count(),
        negative
    );
    // Every bar starts (positive) or ends (negative) at the zero line.
    let zx = attr(&svg, "zero-line", "x1");
    let xs = attrs(&svg, "bar", "x");
    let ws = attrs(&svg, "bar", "width");
    for (x, w) in xs.iter().zip(&ws) {
        assert!(
            (x - zx).abs() < 0.02 || (x + w - zx).abs() < 0.02,
            "bar {x}+{w} off the zero line at {zx}"
        );
    }
    // And the line is drawn there.
    let pix = render(&svg);
    let y = attr(&svg, "zero-line", "y2") - 1.0;
    assert!(
        (-1..=1).any(|d| rgb(&pix, zx + d as f64, y).iter().all(|&v| v < 120)),
        "no zero line at x = {zx}"
    );
    std::fs::remove_dir_all(&dir).unwrap();
}

#[test]
fn effort_command_draws_a_band_per_quantity() {
    let dir = scratch("effort-fig");
    let file = dir.join("v.csv");
    std::fs::write(
        &file,
        "x,a,b,c,d\nr1,9,4,3,1\nr2,5,2,0,1\nr3,3,1,1,0\nr4,2,0,0,0\n",
    )
    .unwrap();
    let fig = dir.join("ef.svg");
    let out = nidus(&[
        "effort",
        file.to_str().unwrap(),
        "--seed",
        "2",
        "--draws",
        "30",
        "--index",
        "nodf,wnodf",
        "--svg",
        fig.to_str().unwrap(),
    ]);
    assert!(
        out.status.success(),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );
    let svg = std::fs::read_to_string(&fig).unwrap();
    // links, NODF, WNODF: three panels, each with its band and mean line.
    assert_eq!(svg.matches("class=\"band\"").count(), 3);
    assert_eq!(svg.matches("class=\"mean-line\"").count(), 3);
    for id in ["band-1", "band-2", "band-3"] {
        assert!(svg.contains(&format!("id=\"{id}\"")), "no {id}");
    }
    for heading in ["links observed", "NODF", "WNODF", "visits in the subsample"] {
        assert!(svg.contains(heading), "no {heading}");
    }
    // The bands are painted: pixels of the band colour in the bitmap.
    let band = hex(&style::ramp(0.15));
    let pix = render(&svg);
    let painted = (0..pix.height())
        .flat_map(|y| (0..pix.width()).map(move |x| (x, y)))
        .filter(|&(x, y)| close(rgb(&pix, x as f64, y as f64), band, 6))
        .count();
    assert!(painted > 500, "band pixels: {painted}");
    std::fs::remove_dir_all(&dir).unwrap();
}

#[test]
fn assess_command_draws_rates_with_the_alpha_line_and_merge_draws_the_same() {
    let dir = scratch("assess-fig");
    let fig = dir.join("as.svg");
    let common = [
        "assess",
        "--rows",
        "8",
        "--cols",
        "9",
        "--fill",
        "0.35",
        "--networks",
        "12",
        "--draws",
        "19",
        "--seed",
        "4",
        "--alpha",
        "0.1",
        "--model",
        "equiprobable,fixed-both",
        "--scenario",
        "random,degrees,nested:0,nested:0.5,nested:1",
    ];
    let out = nidus(&[&common[..], &["--svg", fig.to_str().unwrap()]].concat());
    assert!(
        out.status.success(),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );
    let svg = std::fs::read_to_string(&fig).unwrap();
    // 1 index x 2 models x 3 nested strengths.
    assert_eq!(svg.matches("class=\"whisker\"").count(), 6);
    assert_eq!(svg.matches("class=\"series\"").count(), 2);
    assert!(svg.contains("type I: random") && svg.contains("degrees"));
    // The rate axis runs 0 (bottom) to 1 (top) along the y axis line; the
    // alpha line sits at 0.1 of it, within half a pixel.
    let at = svg.find("axis y-axis").unwrap();
    let (bottom, top) = (
        attr(&svg[at..], "line stroke", "y1"),
        attr(&svg[at..], "line stroke", "y2"),
    );
    let y = attr(&svg, "alpha-line", "y1");
    let want = bottom - 0.1 * (bottom - top);
    assert!((y - want).abs() < 0.5, "alpha line at {y}, want {want}");
    let x = attr(&svg, "alpha-line", "x1") + 2.0;
    let pix = render(&svg);
    assert!(
        (-1..=1).any(|d| rgb(&pix, x, y + d as f64).iter().all(|&v| v < 180)),
        "no alpha line drawn at y = {y}"
    );

    // Shards refuse --svg; their merge draws the very same figure.
    let mut parts = Vec::new();
    for i in 1..=2 {
        let part = dir.join(format!("part{i}.txt"));
        let shard = format!("{i}/2");
        let out = nidus(
            &[
                &common[..],
                &["--shard", &shard, "--save-draws", part.to_str().unwrap()],
            ]
            .concat(),
        );
        assert!(
            out.status.success(),
            "{}",
            String::from_utf8_lossy(&out.stderr)
        );
        parts.push(part);
    }
    let refused = nidus(
        &[
            &common[..],
            &[
                "--shard",
                "1/2",
                "--save-draws",
                dir.join("x.txt").to_str().unwrap(),
                "--svg",
                fig.to_str().unwrap(),
            ],
        ]
        .concat(),
    );
    assert_eq!(refused.status.code(), Some(2));
    assert!(String::from_utf8_lossy(&refused.stderr).contains("nidus merge"));
    let merged_fig = dir.join("merged.svg");
    let out = nidus(&[
        "merge",
        parts[0].to_str().unwrap(),
        parts[1].to_str().unwrap(),
        "--svg",
        merged_fig.to_str().unwrap(),
    ]);
    assert!(
        out.status.success(),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );
    assert_eq!(std::fs::read_to_string(&merged_fig).unwrap(), svg);

    // Without a nested:S scenario there is no strength axis: refused before
    // any network is drawn.
    let out = nidus(&[
        "assess",
        "--rows",
        "5",
        "--cols",
        "5",
        "--fill",
        "0.4",
        "--seed",
        "1",
        "--scenario",
        "random",
        "--svg",
        fig.to_str().unwrap(),
    ]);
    assert_eq!(out.status.code(), Some(2));
    assert!(String::from_utf8_lossy(&out.stderr).contains("nested:S"));
    std::fs::remove_dir_all(&dir).unwrap();
}
