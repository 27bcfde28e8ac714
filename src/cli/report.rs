//! The three output formats of `nidus measure`: text for people, JSON lines
//! and CSV for programs. JSON and CSV come from the serde form of
//! [`Measurement`]; only the text report names fields.

use nidus::measure::{measure, Family, MeasureOptions, Measurement};
use nidus::metrics::DiscrepancyTies;
use nidus::ndarray::array;
use nidus::Network;
use serde_json::{Map, Value};

use super::flat::FlatTable;
use super::numbers::num;
use super::Format;

/// Turns measurements into output text, one file at a time.
pub struct Table {
    format: Format,
    families: Vec<Family>,
    csv: Option<FlatTable>,
    settings: Settings,
}

/// Settings recorded beside each measurement (JSON/CSV keys of the same
/// names), besides `order`, which [`Measurement`] carries.
#[derive(Clone, Copy, Debug)]
struct Settings {
    /// Temperature: random starts of the packing search.
    restarts: usize,
    /// Temperature: was the packed order searched for?
    packing: bool,
}

fn part(x: Option<f64>) -> String {
    x.map_or("none (fewer than 2)".into(), num)
}

/// A measurement as one JSON record: `file`, then the fields of
/// [`Measurement`] as serde writes them, without the families not asked for,
/// with temperature's orders given as species labels.
fn record(
    file: &str,
    m: &Measurement,
    families: &[Family],
    (rows, cols): (&[String], &[String]),
    settings: Settings,
    (dropped_rows, dropped_cols): (usize, usize),
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
    // Every family asked for has its entry: the reason, or null when
    // computed (the same keys, and CSV columns, in every record).
    let reasons: Map<String, Value> = families
        .iter()
        .map(|f| {
            let reason = m
                .not_computed
                .get(f.key())
                .map_or(Value::Null, |r| r.as_str().into());
            (f.key().to_string(), reason)
        })
        .collect();
    o.insert("not_computed".into(), Value::Object(reasons));
    o.insert("restarts".into(), settings.restarts.into());
    o.insert("packing".into(), settings.packing.into());
    o.insert("dropped_rows".into(), dropped_rows.into());
    o.insert("dropped_cols".into(), dropped_cols.into());
    o.insert("nidus_version".into(), env!("CARGO_PKG_VERSION").into());
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
        let settings = Settings {
            restarts: opts.temperature.restarts,
            packing: opts.temperature.pack,
        };
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
            let template = record("", &m, &families, labels, settings, (0, 0));
            Some(FlatTable::new(template))
        } else {
            None
        };
        Ok(Table {
            format,
            families,
            csv,
            settings,
        })
    }

    /// The header line, for formats that have one.
    pub fn header(&self) -> Option<String> {
        self.csv.as_ref().map(FlatTable::header)
    }

    /// The output for one file.
    /// `labels` (rows, columns) name the species in temperature's orders;
    /// `dropped` counts the (row, column) species the reader dropped.
    pub fn record(
        &self,
        file: &str,
        m: &Measurement,
        labels: (&[String], &[String]),
        dropped: (usize, usize),
    ) -> String {
        let json = || record(file, m, &self.families, labels, self.settings, dropped);
        match (self.format, &self.csv) {
            (Format::Csv, Some(csv)) => csv.row(&json()),
            (Format::Text, _) => self.text(file, m, dropped),
            _ => json().to_string() + "\n",
        }
    }

    fn text(&self, file: &str, m: &Measurement, dropped: (usize, usize)) -> String {
        let mut s = format!("{file}\n");
        let dropped = match dropped {
            (0, 0) => String::new(),
            (r, c) => format!(" ({r} row and {c} column species without links left out)"),
        };
        s += &format!(
            "  size         {} rows x {} columns, {} links, fill {}, {}{dropped}\n",
            m.rows,
            m.cols,
            m.links,
            num(m.fill),
            if m.weighted { "weighted" } else { "binary" }
        );
        let packing = if !self.families.contains(&Family::Temperature) {
            String::new()
        } else if self.settings.packing {
            format!(
                "; temperature packing with {} random restarts",
                self.settings.restarts
            )
        } else {
            "; temperature packing off".to_string()
        };
        s += &format!(
            "  order        {} (for NODF and WNODF){packing}\n",
            m.order.name()
        );
        for f in &self.families {
            if let (Some(reason), false) = (
                m.not_computed.get(f.key()),
                *f == Family::Wnodf && !m.weighted,
            ) {
                let label = match f {
                    Family::Nodf => "NODF",
                    Family::Wnodf => "WNODF",
                    f => f.name(),
                };
                s += &format!("  {label:<12} not computed: {reason}\n");
                continue;
            }
            match f {
                Family::Nodf => {
                    if let Some(p) = m.nodf {
                        s += &format!(
                            "  NODF         {}   rows {}, columns {}\n",
                            num(p.total),
                            part(p.rows),
                            part(p.cols)
                        );
                    }
                }
                Family::Wnodf => match m.wnodf {
                    Some(p) => {
                        s += &format!(
                            "  WNODF        {}   rows {}, columns {}\n",
                            num(p.total),
                            part(p.rows),
                            part(p.cols)
                        )
                    }
                    None => s += "  WNODF        not computed: every link has weight 1\n",
                },
                Family::Temperature => {
                    if let Some(t) = &m.temperature {
                        let packed = t.packed.map_or("not searched".into(), num);
                        s += &format!(
                            "  temperature  {packed} packed, {} sorted, {} given   (isocline p {}; lower is more nested)\n",
                            num(t.sorted), num(t.given), num(t.isocline_p)
                        );
                    }
                }
                Family::Spectral => {
                    if let Some(r) = m.spectral_radius {
                        let weighted = if m.weighted {
                            format!("weighted {}, ", num(r.weighted))
                        } else {
                            String::new()
                        };
                        s += &format!(
                            "  spectral     radius {weighted}binary {}   (binary / sqrt(links) {}; higher is more nested)\n",
                            num(r.binary), num(r.binary_normalized)
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
