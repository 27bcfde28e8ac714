//! CSV from the JSON of the library's result types: one column per scalar
//! of a record, named by its JSON path joined with `_` (`nodf.rows` becomes
//! `nodf_rows`); arrays (species orders) are left out.
//!
//! The columns come from a *template* record of the same type in which every
//! part is present, so the header can be written before the first file is
//! read and a part that is `null` in one record (WNODF of a binary network)
//! still takes its columns, empty. A new field of a result type therefore
//! needs no output code here.

use serde_json::Value;

use super::csv_field;

/// The columns and cells of a CSV table whose rows are JSON records.
pub struct FlatTable {
    template: Value,
}

impl FlatTable {
    /// A table whose columns are the scalar paths of `template`.
    pub fn new(template: Value) -> Self {
        FlatTable { template }
    }

    /// The header line.
    pub fn header(&self) -> String {
        let mut names = Vec::new();
        walk(&self.template, Some(&self.template), "", &mut |path, _| {
            names.push(csv_field(path))
        });
        names.join(",") + "\n"
    }

    /// One line: the cells of `record` under the template's columns; a path
    /// missing or `null` in `record` is an empty cell.
    pub fn row(&self, record: &Value) -> String {
        let mut cells = Vec::new();
        walk(&self.template, Some(record), "", &mut |_, v| {
            cells.push(v.map_or(String::new(), cell))
        });
        cells.join(",") + "\n"
    }
}

/// Visits the scalar leaves of `template` in order with their path and the
/// value at the same path in `record`.
fn walk(
    template: &Value,
    record: Option<&Value>,
    path: &str,
    visit: &mut dyn FnMut(&str, Option<&Value>),
) {
    match template {
        Value::Object(fields) => {
            for (key, t) in fields {
                let sub = if path.is_empty() {
                    key.clone()
                } else {
                    format!("{path}_{key}")
                };
                walk(t, record.and_then(|r| r.get(key)), &sub, visit);
            }
        }
        Value::Array(_) => {}
        _ => visit(path, record),
    }
}

/// A scalar as a CSV cell: numbers as Rust prints them (`1` for 1.0, as
/// before the columns came from the types), text quoted when needed.
fn cell(v: &Value) -> String {
    match v {
        Value::Null | Value::Array(_) | Value::Object(_) => String::new(),
        Value::Bool(b) => b.to_string(),
        Value::Number(n) => {
            if let Some(u) = n.as_u64() {
                u.to_string()
            } else if let Some(i) = n.as_i64() {
                i.to_string()
            } else {
                n.as_f64().map_or(String::new(), |x| x.to_string())
            }
        }
        Value::String(s) => csv_field(s),
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use serde_json::json;

    #[test]
    fn paths_join_with_underscore_and_nulls_leave_empty_cells() {
        let t = FlatTable::new(json!({"file": "a", "nodf": {"total": 1.0, "rows": 2.0},
            "order": [1, 2], "n": 3}));
        assert_eq!(t.header(), "file,nodf_total,nodf_rows,n\n");
        let r = json!({"file": "x,y", "nodf": null, "order": [0], "n": 7});
        assert_eq!(t.row(&r), "\"x,y\",,,7\n");
        let r = json!({"file": "b", "nodf": {"total": 1.0, "rows": 0.25}, "n": 7});
        assert_eq!(t.row(&r), "b,1,0.25,7\n");
    }
}
