//! The three output formats of `nidus measure`: text for people, JSON lines
//! and CSV for programs. Each index family adds its entries in the three
//! `match` blocks below and nowhere else.

use nidus::measure::{Family, MeasureOptions, Measurement};
use nidus::metrics::Parts;
use serde_json::{json, Map, Value};

use super::Format;

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

fn csv_num(x: Option<f64>) -> String {
    x.map_or(String::new(), |v| v.to_string())
}

fn csv_field(s: &str) -> String {
    if s.contains([',', '"', '\n', '\r']) {
        format!("\"{}\"", s.replace('"', "\"\""))
    } else {
        s.to_string()
    }
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
            }
        }
        Some(cols.join(",") + "\n")
    }

    /// The output for one file.
    pub fn record(&self, file: &str, m: &Measurement) -> String {
        match self.format {
            Format::Json => self.json(file, m).to_string() + "\n",
            Format::Csv => self.csv(file, m),
            Format::Text => self.text(file, m),
        }
    }

    fn json(&self, file: &str, m: &Measurement) -> Value {
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
            };
            o.insert(f.name().into(), v);
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
            }
        }
        s + "\n"
    }
}
