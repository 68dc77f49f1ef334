//! The batch table: a CSV file with an `id` column and one column per belief-file
//! key to change, and the addressing that applies a cell to the parsed TOML of the
//! base belief file before validation.
//!
//! Addressing (documented in docs/sweep-and-batch.md): a column name is a dotted
//! key path into the base file, e.g. `simulation.seed`, `prior.cure_logit.sd`,
//! `belief.2.distribution.alpha`, `belief.1.quantiles.0.5`. A whole-number segment
//! after an array of tables (`belief`, `experts`, `atoms`) picks its element,
//! counting from 1; one past the end appends a new table. Below a `quantiles`
//! table the rest of the name is one key (so `quantiles.0.5` means the "0.5"
//! quantile); elsewhere a segment may be quoted, `"a.b"`, to keep its dots.
//! Missing intermediate tables are created.
//!
//! Cells: empty = keep the base file's value; `!unset` = remove the key; anything
//! else is read as a TOML value (`0.25`, `12`, `inf`, `true`, `"text"`, `[1, 2]`,
//! `{ family = "beta", alpha = 2, beta = 5 }`), and text that is not valid TOML is
//! taken as a string (`weibull`).

use crate::error::{Error, Location, Result};
use crate::spec::Seg;
use std::path::{Path, PathBuf};

/// One data row of the table.
#[derive(Debug, Clone)]
pub struct Row {
    /// 1-based data-row number (the header is not counted).
    pub number: usize,
    /// Line in the file.
    pub line: u64,
    pub id: String,
    /// (column index, cell text) for every non-empty cell except the id.
    pub cells: Vec<(usize, String)>,
}

/// A parsed batch table.
#[derive(Debug, Clone)]
pub struct Table {
    pub path: PathBuf,
    /// Column names, the id column included.
    pub columns: Vec<String>,
    /// Key segments of each column (empty for the id column).
    pub segments: Vec<Vec<String>>,
    pub rows: Vec<Row>,
}

/// Split a column name into key segments (dots outside double quotes).
pub fn split_column(name: &str) -> std::result::Result<Vec<String>, String> {
    let mut out = Vec::new();
    let mut cur = String::new();
    let mut quoted = false;
    let mut was_quoted = false;
    for c in name.chars() {
        match c {
            '"' => {
                quoted = !quoted;
                was_quoted = true;
            }
            '.' if !quoted => {
                out.push(std::mem::take(&mut cur));
                was_quoted = false;
            }
            _ => cur.push(c),
        }
    }
    if quoted {
        return Err("an opening quote \" is never closed".into());
    }
    out.push(cur);
    if out.iter().any(|s| s.trim().is_empty()) && !was_quoted {
        return Err("empty key segment (two dots in a row, or a dot at an end)".into());
    }
    Ok(out.into_iter().map(|s| s.trim().to_string()).collect())
}

/// Read a CSV cell as a TOML value (plain text when it is not valid TOML).
pub fn cell_value(text: &str) -> toml::Value {
    let t = text.trim();
    match toml::from_str::<toml::Table>(&format!("v = {t}")) {
        Ok(mut tab) => tab
            .remove("v")
            .unwrap_or(toml::Value::String(t.to_string())),
        Err(_) => toml::Value::String(t.to_string()),
    }
}

fn describe(v: &toml::Value) -> &'static str {
    v.type_str()
}

/// Set (`Some`) or remove (`None`) the key at `segs` in `table`. Returns the
/// key path in the form error messages of the belief file use.
pub fn apply(
    table: &mut toml::Table,
    segs: &[String],
    value: Option<toml::Value>,
) -> std::result::Result<Vec<Seg>, String> {
    let mut path = Vec::new();
    apply_in(table, segs, value, &mut path)?;
    Ok(path)
}

fn apply_in(
    table: &mut toml::Table,
    segs: &[String],
    value: Option<toml::Value>,
    path: &mut Vec<Seg>,
) -> std::result::Result<(), String> {
    let k = &segs[0];
    // Below `quantiles` the rest of the name is one key ("0.5").
    let rest_joined;
    let rest: &[String] = if k == "quantiles" && segs.len() > 2 {
        rest_joined = [segs[1..].join(".")];
        &rest_joined
    } else {
        &segs[1..]
    };
    path.push(Seg::Key(k.clone()));
    if rest.is_empty() {
        match value {
            Some(v) => {
                table.insert(k.clone(), v);
            }
            None => {
                table.remove(k);
            }
        }
        return Ok(());
    }
    let next_is_index = rest[0].parse::<usize>().is_ok();
    if !table.contains_key(k) {
        if value.is_none() {
            return Ok(()); // removing something absent: nothing to do
        }
        if next_is_index {
            table.insert(k.clone(), toml::Value::Array(Vec::new()));
        } else {
            table.insert(k.clone(), toml::Value::Table(toml::Table::new()));
        }
    }
    match table.get_mut(k) {
        Some(toml::Value::Table(t)) => apply_in(t, rest, value, path),
        Some(toml::Value::Array(a)) => {
            let n: usize = rest[0].parse().map_err(|_| {
                format!(
                    "`{}` is a list: the next part of the name must be a position from 1, not `{}`",
                    crate::spec::render(path),
                    rest[0]
                )
            })?;
            if n == 0 || n > a.len() + 1 {
                return Err(format!(
                    "`{}` has {} entries: position {n} does not exist (use 1 to {}; {} appends one)",
                    crate::spec::render(path),
                    a.len(),
                    a.len(),
                    a.len() + 1
                ));
            }
            if n == a.len() + 1 {
                if value.is_none() {
                    return Ok(());
                }
                a.push(toml::Value::Table(toml::Table::new()));
            }
            path.push(Seg::Index(n - 1));
            let after = &rest[1..];
            if after.is_empty() {
                match value {
                    Some(v) => a[n - 1] = v,
                    None => {
                        a.remove(n - 1);
                    }
                }
                return Ok(());
            }
            match &mut a[n - 1] {
                toml::Value::Table(t) => apply_in(t, after, value, path),
                other => Err(format!(
                    "`{}` is a {}, not a table",
                    crate::spec::render(path),
                    describe(other)
                )),
            }
        }
        Some(other) => Err(format!(
            "`{}` is a {} in the base file, not a table",
            crate::spec::render(path),
            describe(other)
        )),
        None => Err(format!(
            "`{}` could not be created",
            crate::spec::render(path)
        )),
    }
}

/// Is `id` usable as a folder name on every common file system?
pub fn check_id(id: &str) -> std::result::Result<(), String> {
    if id.is_empty() {
        return Err("the id is empty".into());
    }
    if id.len() > 100 {
        return Err(format!("id \"{id}\" is longer than 100 characters"));
    }
    if id.starts_with('.') || id.starts_with('-') {
        return Err(format!("id \"{id}\" must not start with '.' or '-'"));
    }
    if let Some(c) = id
        .chars()
        .find(|c| !(c.is_ascii_alphanumeric() || matches!(c, '.' | '_' | '-')))
    {
        return Err(format!(
            "id \"{id}\" contains `{c}`: use letters, digits, '.', '_' and '-' (it names a folder)"
        ));
    }
    Ok(())
}

fn table_err(path: &Path, line: Option<u64>, msg: String) -> Error {
    Error::input(
        Location {
            file: Some(path.to_path_buf()),
            line: line.map(|l| l as usize),
            key: None,
        },
        msg,
    )
}

/// Read a batch table. Problems with the table as a whole (no id column, a bad
/// column name, ragged rows) are errors; problems of one row are left to the
/// row (see [`super::plan`]).
pub fn read(path: &Path) -> Result<Table> {
    let bytes = crate::limits::read_capped(path, crate::limits::TABLE_BYTES, "batch table")?;
    let mut rdr = csv::ReaderBuilder::new()
        .has_headers(true)
        .comment(Some(b'#'))
        .from_reader(bytes.as_slice());
    let header = rdr
        .headers()
        .map_err(|e| table_err(path, Some(1), format!("cannot read the header: {e}")))?
        .clone();
    let columns: Vec<String> = header.iter().map(|s| s.trim().to_string()).collect();
    let id_col = columns.iter().position(|c| c == "id").ok_or_else(|| {
        table_err(
            path,
            Some(1),
            "no `id` column: every row needs an id".into(),
        )
        .with_hint(
            "the first line names the columns, e.g. id,simulation.seed,belief.1.quantiles.0.5",
        )
    })?;
    let mut segments = Vec::new();
    for (i, c) in columns.iter().enumerate() {
        if columns[..i].contains(c) {
            return Err(Error::input(
                Location {
                    file: Some(path.to_path_buf()),
                    line: Some(1),
                    key: Some(c.clone()),
                },
                format!("column `{c}` appears twice"),
            ));
        }
        if i == id_col {
            segments.push(Vec::new());
            continue;
        }
        segments.push(split_column(c).map_err(|m| {
            Error::input(
                Location {
                    file: Some(path.to_path_buf()),
                    line: Some(1),
                    key: Some(c.clone()),
                },
                format!("column name `{c}`: {m}"),
            )
        })?);
    }
    let mut rows = Vec::new();
    for (k, rec) in rdr.records().enumerate() {
        let rec = rec.map_err(|e| {
            let line = e.position().map(|p| p.line());
            table_err(path, line, format!("data row {}: {e}", k + 1))
        })?;
        let line = rec.position().map_or(k as u64 + 2, |p| p.line());
        // A quoted cell may span lines; read as TOML its later lines would be
        // other keys, silently dropped: a cell is one value.
        if let Some((i, v)) = rec
            .iter()
            .enumerate()
            .find(|(_, v)| v.contains(['\n', '\r']))
        {
            let col = columns.get(i).cloned().unwrap_or_default();
            let first = v.lines().next().unwrap_or("");
            return Err(Error::input(
                Location {
                    file: Some(path.to_path_buf()),
                    line: Some(line as usize),
                    key: Some(col.clone()),
                },
                format!(
                    "data row {}, column `{col}`: the cell holds a line break (it starts \
                     \"{first}\"); a cell is one value on one line",
                    k + 1
                ),
            )
            .with_hint("put each change in its own column, e.g. fit.draws"));
        }
        let cells = rec
            .iter()
            .enumerate()
            .filter(|(i, v)| *i != id_col && !v.trim().is_empty())
            .map(|(i, v)| (i, v.trim().to_string()))
            .collect();
        rows.push(Row {
            number: k + 1,
            line,
            id: rec.get(id_col).unwrap_or("").trim().to_string(),
            cells,
        });
    }
    if rows.is_empty() {
        return Err(table_err(path, None, "the table has no data rows".into()));
    }
    Ok(Table {
        path: path.to_path_buf(),
        columns,
        segments,
        rows,
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    fn base() -> toml::Table {
        toml::from_str(
            r#"
[simulation]
seed = 1
[[belief]]
quantity = "cure_fraction"
quantiles = { "0.1" = 0.15, "0.5" = 0.25 }
[[belief]]
quantity = "survival_prob"
distribution = { family = "beta", alpha = 12, beta = 18 }
"#,
        )
        .unwrap()
    }

    fn segs(s: &str) -> Vec<String> {
        split_column(s).unwrap()
    }

    #[test]
    fn sets_nested_keys_and_quantiles() {
        let mut t = base();
        let p = apply(
            &mut t,
            &segs("belief.2.distribution.alpha"),
            Some(cell_value("7")),
        )
        .unwrap();
        assert_eq!(crate::spec::render(&p), "belief[2].distribution.alpha");
        apply(
            &mut t,
            &segs("belief.1.quantiles.0.5"),
            Some(cell_value("0.3")),
        )
        .unwrap();
        apply(&mut t, &segs("simulation.seed"), Some(cell_value("42"))).unwrap();
        apply(
            &mut t,
            &segs("model.latency"),
            Some(cell_value("lognormal")),
        )
        .unwrap();
        let b = t["belief"].as_array().unwrap();
        assert_eq!(b[1]["distribution"]["alpha"].as_integer(), Some(7));
        assert_eq!(b[0]["quantiles"]["0.5"].as_float(), Some(0.3));
        assert_eq!(t["simulation"]["seed"].as_integer(), Some(42));
        assert_eq!(t["model"]["latency"].as_str(), Some("lognormal"));
    }

    #[test]
    fn quoted_segments_unset_and_append() {
        let mut t = base();
        apply(
            &mut t,
            &segs(r#"belief.1.quantiles."0.9""#),
            Some(cell_value("0.4")),
        )
        .unwrap();
        assert_eq!(t["belief"][0]["quantiles"]["0.9"].as_float(), Some(0.4));
        apply(&mut t, &segs("belief.2.distribution"), None).unwrap();
        assert!(t["belief"][1].get("distribution").is_none());
        apply(&mut t, &segs("belief.3.quantity"), Some(cell_value("rmst"))).unwrap();
        assert_eq!(t["belief"].as_array().unwrap().len(), 3);
        let v = cell_value("{ family = \"beta\", alpha = 2, beta = 5 }");
        assert!(v.is_table());
        assert_eq!(cell_value("inf").as_float(), Some(f64::INFINITY));
    }

    #[test]
    fn bad_addresses_are_explained() {
        let mut t = base();
        let e = apply(&mut t, &segs("belief.5.quantity"), Some(cell_value("x"))).unwrap_err();
        assert!(e.contains("position 5 does not exist"), "{e}");
        let e = apply(
            &mut t,
            &segs("belief.first.quantity"),
            Some(cell_value("x")),
        )
        .unwrap_err();
        assert!(e.contains("is a list"), "{e}");
        let e = apply(&mut t, &segs("simulation.seed.x"), Some(cell_value("1"))).unwrap_err();
        assert!(e.contains("not a table"), "{e}");
        assert!(split_column("a..b").is_err());
        assert!(check_id("ok-1.a_b").is_ok());
        assert!(check_id("bad/id").is_err() && check_id("").is_err() && check_id("..").is_err());
    }
}
