//! The three output formats of `nidus measure`: text for people, JSON lines
//! and CSV for programs. Each index family adds its entries in the three
//! `match` blocks below and nowhere else.

use nidus::measure::{Family, MeasureOptions, Measurement};
use nidus::metrics::{DiscrepancyTies, Parts};
use serde_json::{json, Map, Value};

use super::{csv_field, Format};

/// Turns measurements into output text, one file at a time.
pub struct Table {
    format: Format,
    families: Vec<Family>,
}

fn opt(x: Option<f64>) -> Value {
    x.map_or(Value::Null, Value::from)
}

fn parts_json(p: Option<Parts>) -> Value {
    match p {
        None => Value::Null,
        Some(p) => json!({"total": p.total, "rows": opt(p.rows), "cols": opt(p.cols)}),
    }
}

fn temperature_json(m: &Measurement, (rows, cols): (&[String], &[String])) -> Value {
    let Some(t) = &m.temperature else {
        return Value::Null;
    };
    let named = |order: &[usize], labels: &[String]| -> Value {
        order
            .iter()
            .map(|&i| Value::from(labels[i].as_str()))
            .collect()
    };
    json!({
        "given": t.given,
        "sorted": t.sorted,
        "packed": opt(t.packed),
        "isocline_p": t.isocline_p,
        "row_order": named(&t.row_order, rows),
        "col_order": named(&t.col_order, cols),
    })
}

fn csv_num(x: Option<f64>) -> String {
    x.map_or(String::new(), |v| v.to_string())
}

fn fmt2(x: Option<f64>) -> String {
    x.map_or("none (fewer than 2)".into(), |v| format!("{v:.2}"))
}

impl Table {
    /// A table for the families `opts` asks for, in their canonical order.
    pub fn new(format: Format, opts: &MeasureOptions) -> Self {
        let families = Family::ALL
            .iter()
            .copied()
            .filter(|f| opts.wants(*f))
            .collect();
        Table { format, families }
    }

    /// The header line, for formats that have one.
    pub fn header(&self) -> Option<String> {
        if self.format != Format::Csv {
            return None;
        }
        let mut cols: Vec<&str> =
            vec!["file", "rows", "cols", "links", "fill", "weighted", "order"];
        for f in &self.families {
            match f {
                Family::Nodf => cols.extend(["nodf", "nodf_rows", "nodf_cols"]),
                Family::Wnodf => cols.extend(["wnodf", "wnodf_rows", "wnodf_cols"]),
                Family::Temperature => cols.extend([
                    "temperature_given",
                    "temperature_sorted",
                    "temperature_packed",
                    "isocline_p",
                ]),
                Family::Spectral => cols.extend([
                    "spectral_weighted",
                    "spectral_binary",
                    "spectral_binary_normalized",
                ]),
                Family::Discrepancy => cols.extend([
                    "discrepancy_rows_stable",
                    "discrepancy_rows_minimum",
                    "discrepancy_cols_stable",
                    "discrepancy_cols_minimum",
                ]),
            }
        }
        Some(cols.join(",") + "\n")
    }

    /// The output for one file.
    /// `labels` (rows, columns) name the species in temperature's orders.
    pub fn record(&self, file: &str, m: &Measurement, labels: (&[String], &[String])) -> String {
        match self.format {
            Format::Json => self.json(file, m, labels).to_string() + "\n",
            Format::Csv => self.csv(file, m),
            Format::Text => self.text(file, m),
        }
    }

    fn json(&self, file: &str, m: &Measurement, labels: (&[String], &[String])) -> Value {
        let mut o = Map::new();
        o.insert("file".into(), file.into());
        o.insert("rows".into(), m.rows.into());
        o.insert("cols".into(), m.cols.into());
        o.insert("links".into(), m.links.into());
        o.insert("fill".into(), m.fill.into());
        o.insert("weighted".into(), m.weighted.into());
        o.insert("order".into(), m.order.name().into());
        for f in &self.families {
            let v = match f {
                Family::Nodf => parts_json(m.nodf),
                Family::Wnodf => parts_json(m.wnodf),
                Family::Temperature => temperature_json(m, labels),
                Family::Spectral => m.spectral_radius.map_or(Value::Null, |r| {
                    json!({"weighted": r.weighted, "binary": r.binary, "binary_normalized": r.binary_normalized})
                }),
                Family::Discrepancy => m.discrepancy.map_or(Value::Null, |d| {
                    let side = |t: DiscrepancyTies| json!({"stable": t.stable, "minimum": t.minimum});
                    json!({"rows": side(d.rows), "cols": side(d.cols)})
                }),
            };
            o.insert(f.key().into(), v);
        }
        Value::Object(o)
    }

    fn csv(&self, file: &str, m: &Measurement) -> String {
        let mut cells = vec![
            csv_field(file),
            m.rows.to_string(),
            m.cols.to_string(),
            m.links.to_string(),
            m.fill.to_string(),
            m.weighted.to_string(),
            m.order.name().to_string(),
        ];
        let parts = |p: Option<Parts>| {
            [
                csv_num(p.map(|p| p.total)),
                csv_num(p.and_then(|p| p.rows)),
                csv_num(p.and_then(|p| p.cols)),
            ]
        };
        for f in &self.families {
            match f {
                Family::Nodf => cells.extend(parts(m.nodf)),
                Family::Wnodf => cells.extend(parts(m.wnodf)),
                Family::Temperature => {
                    let t = m.temperature.as_ref();
                    cells.extend([
                        csv_num(t.map(|t| t.given)),
                        csv_num(t.map(|t| t.sorted)),
                        csv_num(t.and_then(|t| t.packed)),
                        csv_num(t.map(|t| t.isocline_p)),
                    ])
                }
                Family::Spectral => {
                    let r = m.spectral_radius;
                    cells.extend([
                        csv_num(r.map(|r| r.weighted)),
                        csv_num(r.map(|r| r.binary)),
                        csv_num(r.map(|r| r.binary_normalized)),
                    ])
                }
                Family::Discrepancy => {
                    let n = |x: Option<usize>| x.map_or(String::new(), |v| v.to_string());
                    let d = m.discrepancy;
                    cells.extend([
                        n(d.map(|d| d.rows.stable)),
                        n(d.and_then(|d| d.rows.minimum)),
                        n(d.map(|d| d.cols.stable)),
                        n(d.and_then(|d| d.cols.minimum)),
                    ])
                }
            }
        }
        cells.join(",") + "\n"
    }

    fn text(&self, file: &str, m: &Measurement) -> String {
        let mut s = format!("{file}\n");
        s += &format!(
            "  size         {} rows x {} columns, {} links, fill {:.4}, {}\n",
            m.rows,
            m.cols,
            m.links,
            m.fill,
            if m.weighted { "weighted" } else { "binary" }
        );
        s += &format!("  order        {} (for NODF and WNODF)\n", m.order.name());
        for f in &self.families {
            match f {
                Family::Nodf => {
                    if let Some(p) = m.nodf {
                        s += &format!(
                            "  NODF         {:.2}   rows {}, columns {}\n",
                            p.total,
                            fmt2(p.rows),
                            fmt2(p.cols)
                        );
                    }
                }
                Family::Wnodf => match m.wnodf {
                    Some(p) => {
                        s += &format!(
                            "  WNODF        {:.2}   rows {}, columns {}\n",
                            p.total,
                            fmt2(p.rows),
                            fmt2(p.cols)
                        )
                    }
                    None => s += "  WNODF        not computed: every link has weight 1\n",
                },
                Family::Temperature => {
                    if let Some(t) = &m.temperature {
                        let packed = t
                            .packed
                            .map_or("not searched".into(), |p| format!("{p:.2}"));
                        s += &format!(
                            "  temperature  {packed} packed, {:.2} sorted, {:.2} given   (isocline p {:.3}; lower is more nested)\n",
                            t.sorted, t.given, t.isocline_p
                        );
                    }
                }
                Family::Spectral => {
                    if let Some(r) = m.spectral_radius {
                        let weighted = if m.weighted {
                            format!("weighted {:.4}, ", r.weighted)
                        } else {
                            String::new()
                        };
                        s += &format!(
                            "  spectral     radius {weighted}binary {:.4}   (binary / sqrt(links) {:.4})\n",
                            r.binary, r.binary_normalized
                        );
                    }
                }
                Family::Discrepancy => {
                    if let Some(d) = m.discrepancy {
                        let side = |t: DiscrepancyTies| {
                            match t.minimum {
                            Some(min) => format!("{min} (ties in file order: {})", t.stable),
                            None => format!(
                                "{} with ties in file order (fewest not computed: a tie group is too large)",
                                t.stable
                            ),
                        }
                        };
                        s += &format!(
                            "  discrepancy  {} within rows, {} within columns\n               (links to move to make the matrix nested, fewest over the orders of species with equal degrees; 0 is perfectly nested)\n",
                            side(d.rows),
                            side(d.cols)
                        );
                    }
                }
            }
        }
        s + "\n"
    }
}
