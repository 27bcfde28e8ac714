//! The matrix layout: a table with or without its labels (see [`Labels`]).

use super::*;

/// Reads the matrix layout with the labels `labels` says (see [`Labels`]).
pub(super) fn parse_matrix(
    fields: &mut Fields<'_>,
    labels: Labels,
    report: &mut ReadReport,
) -> Result<Table> {
    let mut rec: Vec<Cow<'_, str>> = Vec::new();
    let first_line = match fields.next_record(&mut rec)? {
        Some(l) => l,
        None => {
            return Err(fields.error(
                1,
                None,
                "the file is empty; expected a header line of column labels, then one line per row species".into(),
            ))
        }
    };
    let decimal_comma = fields.delim == b';';
    let (header, row_labels) = match labels {
        Labels::Both => (true, true),
        Labels::Rows => (false, true),
        Labels::Cols => (true, false),
        Labels::None => (false, false),
        // The corner cell is a number (a labelled table holds a name there
        // or leaves it empty) and no other cell of the first line is text.
        Labels::Auto => {
            let numbers = is_number(&rec[0], decimal_comma)
                && rec[1..]
                    .iter()
                    .all(|f| f.is_empty() || is_number(f, decimal_comma));
            (!numbers, !numbers)
        }
    };
    let auto = labels == Labels::Auto && !header;
    if let Some(table) = parse_table(fields, &mut rec, first_line, (header, row_labels), auto)? {
        if auto {
            report.notes.push(ReadNote::Unlabelled {
                rows: table.rows.len(),
                cols: table.cols.len(),
            });
        }
        return Ok(table);
    }
    // A later line starts with text: the table is labelled after all.
    *fields = fields.restart();
    fields.next_record(&mut rec)?;
    parse_table(fields, &mut rec, first_line, (true, true), false)?
        .ok_or_else(|| Error::InvalidArgument("internal: a labelled table gave up".into()))
}

/// Errors when a dense table of `rows x n` values passes the cap of
/// [`check_dense_size`](crate::network::check_dense_size), at `line`: the
/// reader refuses as soon as the table grows past it.
pub(super) fn check_table_size(
    fields: &Fields<'_>,
    line: usize,
    rows: usize,
    n: usize,
) -> Result<()> {
    match crate::network::check_dense_size("the matrix layout", rows, n, 8) {
        Ok(()) => Ok(()),
        Err(Error::TooLarge { bytes, .. }) => Err(fields.error(
            line,
            None,
            format!(
                "the table reaches {rows} rows x {n} columns here, {bytes} bytes as a dense table, past \
                 the cap of {} cells or {} bytes; give a network this large as an edge list, which \
                 is stored sparsely",
                crate::network::DENSE_CELL_LIMIT,
                crate::network::DENSE_BYTE_LIMIT
            ),
        )),
        Err(e) => Err(e),
    }
}

/// Reads a table whose first line is in `rec`, with a header line of
/// column labels when `header` and a row label first on each data line when
/// `row_labels`; missing labels are `r1..` and `c1..`. With `auto` (a table
/// read as unlabelled by [`Labels::Auto`]), returns `None` at the first
/// line whose first field is text.
pub(super) fn parse_table<'a>(
    fields: &mut Fields<'a>,
    rec: &mut Vec<Cow<'a, str>>,
    first_line: usize,
    (header, row_labels): (bool, bool),
    auto: bool,
) -> Result<Option<Table>> {
    let width = rec.len();
    let off = usize::from(row_labels);
    if width <= off {
        return Err(fields.error(
            first_line,
            None,
            format!(
                "the {} has one field (\"{}\"); expected a first cell and at least one {}, separated by commas, tabs or semicolons",
                if header { "header" } else { "first line" },
                rec[0],
                if header { "column label" } else { "value" }
            ),
        ));
    }
    let n = width - off;
    let like = if header {
        format!("like the header on line {first_line}")
    } else {
        format!("like the first line (line {first_line}) of this table")
    };
    let col_labels: Vec<String> = if header {
        let mut labels: Vec<String> = Vec::with_capacity(n);
        let mut seen: HashMap<String, usize> = HashMap::with_capacity(n);
        for (k, label) in rec.iter().enumerate().skip(off) {
            if label.is_empty() {
                return Err(fields.error(
                    first_line,
                    Some(k + 1),
                    if rec.iter().all(|f| f.is_empty()) {
                        EMPTY_FIELDS.into()
                    } else {
                        "empty column label; expected a label for every column".into()
                    },
                ));
            }
            if let Some(first) = seen.insert(label.to_string(), k + 1) {
                return Err(fields.error(
                    first_line,
                    Some(k + 1),
                    format!(
                        "the column label \"{label}\" repeats field {first}; column labels must be unique"
                    ),
                ));
            }
            labels.push(label.to_string());
        }
        labels
    } else {
        (1..=n).map(|j| format!("c{j}")).collect()
    };
    let decimal_comma = fields.delim == b';';
    let mut labels: Vec<String> = Vec::new();
    let mut seen: HashMap<String, usize> = HashMap::new();
    let mut values: Vec<f64> = Vec::new();
    let mut rows = 0usize;
    let mut next = if header {
        fields.next_record(rec)?
    } else {
        Some(first_line)
    };
    while let Some(line) = next {
        if auto && !rec[0].is_empty() && !is_number(&rec[0], decimal_comma) {
            return Ok(None);
        }
        if rec.len() != width {
            return Err(fields.error(
                line,
                None,
                format!(
                    "this line has {} field{}, expected {width} {like}{}",
                    rec.len(),
                    if rec.len() == 1 { "" } else { "s" },
                    decimal_comma_hint(fields.delim, rec.len() > width)
                ),
            ));
        }
        if row_labels {
            let label = &rec[0];
            if label.is_empty() {
                return Err(fields.error(
                    line,
                    Some(1),
                    if rec.iter().all(|f| f.is_empty()) {
                        EMPTY_FIELDS.into()
                    } else {
                        "empty row label; expected the row's label in the first field".into()
                    },
                ));
            }
            if let Some(first) = seen.insert(label.to_string(), line) {
                return Err(fields.error(
                    line,
                    Some(1),
                    format!(
                        "the row label \"{label}\" was already used on line {first}; row labels must be unique"
                    ),
                ));
            }
            labels.push(label.to_string());
        }
        for (k, cell) in rec.iter().enumerate().skip(off) {
            values.push(if cell.is_empty() {
                0.0
            } else {
                fields.value(cell, line, k + 1, "an empty cell counts as 0")?
            });
        }
        rows += 1;
        check_table_size(fields, line, rows, n)?;
        next = fields.next_record(rec)?;
    }
    if rows == 0 {
        return Err(fields.error(
            first_line,
            None,
            "the file has a header but no data rows; expected one line per row species after the header".into(),
        ));
    }
    if !row_labels {
        labels = (1..=rows).map(|i| format!("r{i}")).collect();
    }
    let weights = Array2::from_shape_vec((rows, n), values)
        .map_err(|e| Error::InvalidArgument(format!("internal shape error: {e}")))?;
    Ok(Some(Table {
        rows: labels,
        cols: col_labels,
        cells: TableCells::Dense(weights),
    }))
}
