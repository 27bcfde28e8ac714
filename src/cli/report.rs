//! The three output formats of `nidus measure`: text for people, JSON lines
//! and CSV for programs. JSON and CSV come from the serde form of
//! [`Measurement`]; only the text report names fields.

use nidus::measure::{measure, Family, MeasureOptions, Measurement};
use nidus::metrics::DiscrepancyTies;
use nidus::ndarray::array;
use nidus::Network;
use serde_json::{Map, Value};

use super::flat::FlatTable;
use super::Format;

/// Turns measurements into output text, one file at a time.
pub struct Table {
    format: Format,
    families: Vec<Family>,
    csv: Option<FlatTable>,
}

fn fmt2(x: Option<f64>) -> String {
    x.map_or("none (fewer than 2)".into(), |v| format!("{v:.2}"))
}

/// A measurement as one JSON record: `file`, then the fields of
/// [`Measurement`] as serde writes them, without the families not asked for,
/// with temperature's orders given as species labels.
fn record(
    file: &str,
    m: &Measurement,
    families: &[Family],
    (rows, cols): (&[String], &[String]),
) -> Value {
    let mut o = Map::new();
    o.insert("file".into(), file.into());
    if let Ok(Value::Object(fields)) = serde_json::to_value(m) {
        for (key, v) in fields {
            let left_out = Family::ALL
                .iter()
                .any(|f| f.key() == key && !families.contains(f));
            if !left_out {
                o.insert(key, v);
            }
        }
    }
    if let Some(Value::Object(t)) = o.get_mut("temperature") {
        for (key, labels) in [("row_order", rows), ("col_order", cols)] {
            if let Some(Value::Array(order)) = t.get_mut(key) {
                for v in order.iter_mut() {
                    if let Some(label) = v.as_u64().and_then(|i| labels.get(i as usize)) {
                        *v = Value::from(label.as_str());
                    }
                }
            }
        }
    }
    Value::Object(o)
}

impl Table {
    /// A table for the families `opts` asks for, in their canonical order.
    /// For CSV the columns are those of a measurement, with the same options,
    /// of a small weighted network in which every index is defined.
    pub fn new(format: Format, opts: &MeasureOptions) -> nidus::Result<Self> {
        let families: Vec<Family> = Family::ALL
            .iter()
            .copied()
            .filter(|f| opts.wants(*f))
            .collect();
        let csv = if format == Format::Csv {
            let net =
                Network::from_array(array![[3.0, 2.0, 1.0], [2.0, 1.0, 0.0], [1.0, 0.0, 0.0]])?;
            let m = measure(&net, opts)?;
            let labels = (net.row_labels(), net.col_labels());
            Some(FlatTable::new(record("", &m, &families, labels)))
        } else {
            None
        };
        Ok(Table {
            format,
            families,
            csv,
        })
    }

    /// The header line, for formats that have one.
    pub fn header(&self) -> Option<String> {
        self.csv.as_ref().map(FlatTable::header)
    }

    /// The output for one file.
    /// `labels` (rows, columns) name the species in temperature's orders.
    pub fn record(&self, file: &str, m: &Measurement, labels: (&[String], &[String])) -> String {
        match (self.format, &self.csv) {
            (Format::Csv, Some(csv)) => csv.row(&record(file, m, &self.families, labels)),
            (Format::Text, _) => self.text(file, m),
            _ => record(file, m, &self.families, labels).to_string() + "\n",
        }
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
