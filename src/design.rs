//! The design: the covariate rows over which the regression templates compute
//! R², average risks and other design-level quantities.
//!
//! A `[design]` table gives either
//! * `file = "x.csv"`: a CSV file (header row of column names, one numeric column
//!   per covariate), read relative to the belief file; a missing or non-numeric
//!   cell is an error naming the file, the line, the column and the bad text; or
//! * `columns = p, rows = n`: a synthetic design of n rows drawn from a p-variate
//!   normal with unit variances and correlation `correlation = "independent"`
//!   (default), `"ar1"` (corr(x_j, x_k) = ρ^|j−k|, built as x_j = ρx_{j−1} +
//!   √(1−ρ²) z_j) or `"exchangeable"` (corr = ρ ≥ 0, built as x_j = √ρ w + √(1−ρ) z_j),
//!   with `rho` and `seed`; columns are named x1 … xp. Row r uses ChaCha8 stream r
//!   of the seed (see [`crate::rng`]), so the design is the same on every machine.
//!
//! Clusters (for the multilevel templates): `group = "NAME"` names a column of
//! the CSV file holding each row's cluster label (any text; the column is not a
//! covariate), or `clusters = J` splits the rows, in order, into J consecutive
//! clusters of near-equal size (sizes ⌊n/J⌋ or ⌈n/J⌉). Either way the design
//! records the number of clusters and their sizes.
//!
//! `standardise = true` centres every column and scales it to variance 1 (the
//! 1/n variance of the rows, so that the design covariance S = X_cᵀX_c/n has unit
//! diagonal); a constant column is then an error. Whatever the choice, the design
//! is stored *centred* (X_c = X − x̄): the regression templates put covariates in
//! the linear predictor as deviations from their design means.

use crate::error::{choice_hint, Error, Location, Result};
use crate::input::{key, Ctx, Seg};
use nalgebra::DMatrix;
use std::path::Path;

/// Largest design accepted (cells), about 400 MB of doubles.
pub const MAX_CELLS: usize = 50_000_000;

const KEYS: [&str; 9] = [
    "file",
    "group",
    "clusters",
    "standardise",
    "columns",
    "rows",
    "correlation",
    "rho",
    "seed",
];

#[derive(Debug, Clone, Copy, PartialEq)]
pub enum Correlation {
    Independent,
    Ar1(f64),
    Exchangeable(f64),
}

/// A validated design, centred at its column means.
#[derive(Debug, Clone)]
pub struct Design {
    /// Where the design came from (for reports).
    pub source: String,
    pub names: Vec<String>,
    /// Column means of the (possibly standardised) design before centring.
    pub means: Vec<f64>,
    /// Original column means and sds (before standardising), for profiles in raw units.
    pub raw_means: Vec<f64>,
    pub raw_sds: Vec<f64>,
    /// 1/n variances of the stored columns: the diagonal of S.
    pub var: Vec<f64>,
    /// Centred design X_c, rows × columns.
    pub xc: DMatrix<f64>,
    pub standardised: bool,
    /// The rows' clusters, when `[design]` gives `group` or `clusters`.
    pub clusters: Option<Clusters>,
}

/// The clusters of a design's rows.
#[derive(Debug, Clone, PartialEq)]
pub struct Clusters {
    /// The grouping factor's name: the `group` column, or "cluster".
    pub name: String,
    /// Rows per cluster, in order of first appearance.
    pub sizes: Vec<usize>,
}

impl Clusters {
    /// J clusters of near-equal size over n rows, in row order.
    pub fn equal(n: usize, j: usize) -> Self {
        let sizes = (0..j).map(|k| (k + 1) * n / j - k * n / j).collect();
        Clusters {
            name: "cluster".into(),
            sizes,
        }
    }
    pub fn count(&self) -> usize {
        self.sizes.len()
    }
    /// Mean cluster size m̄ and coefficient of variation of the sizes (1/J variance).
    pub fn mean_cv(&self) -> (f64, f64) {
        let j = self.sizes.len() as f64;
        let m = self.sizes.iter().sum::<usize>() as f64 / j;
        let v = self
            .sizes
            .iter()
            .map(|s| (*s as f64 - m).powi(2))
            .sum::<f64>()
            / j;
        (m, v.sqrt() / m)
    }
}

impl Design {
    pub fn rows(&self) -> usize {
        self.xc.nrows()
    }
    pub fn cols(&self) -> usize {
        self.xc.ncols()
    }
    pub fn column(&self, name: &str) -> Option<usize> {
        self.names.iter().position(|n| n == name)
    }

    /// The factor column j was divided by when stored: its raw sd when the
    /// design is standardised, else 1. A coefficient per raw unit times this is
    /// the coefficient per stored unit.
    pub fn stored_scale(&self, j: usize) -> f64 {
        if self.standardised {
            self.raw_sds[j]
        } else {
            1.0
        }
    }

    /// How the columns are stored, for labels: "standardised" or "centred".
    pub fn stored_as(&self) -> &'static str {
        if self.standardised {
            "standardised"
        } else {
            "centred"
        }
    }

    /// Build from a row-major table of raw values.
    pub fn from_rows(
        source: String,
        names: Vec<String>,
        rows: usize,
        data: &[f64],
        standardise: bool,
    ) -> std::result::Result<Self, String> {
        let p = names.len();
        let mut raw_means = vec![0.0; p];
        let mut raw_sds = vec![0.0; p];
        for (j, (m, s)) in raw_means.iter_mut().zip(raw_sds.iter_mut()).enumerate() {
            let col = (0..rows).map(|r| data[r * p + j]);
            *m = col.clone().sum::<f64>() / rows as f64;
            *s = (col.map(|x| (x - *m).powi(2)).sum::<f64>() / rows as f64).sqrt();
            if !m.is_finite() || !s.is_finite() {
                return Err(format!(
                    "column `{}` has values too large to average (mean {}, sd {}); rescale it",
                    names[j], m, s
                ));
            }
            if standardise && *s <= 1e-12 * m.abs().max(1.0) {
                return Err(format!(
                    "column `{}` is constant ({}); it cannot be standardised",
                    names[j], m
                ));
            }
        }
        if p > 0
            && raw_sds
                .iter()
                .zip(&raw_means)
                .all(|(s, m)| *s <= 1e-12 * m.abs().max(1.0))
        {
            return Err(format!(
                "every column of the design is constant (first: `{}` = {}): centred, the \
                 design is all zero and says nothing about how outcomes vary with the \
                 covariates",
                names[0], raw_means[0]
            ));
        }
        let mut xc = DMatrix::zeros(rows, p);
        for j in 0..p {
            let scale = if standardise { 1.0 / raw_sds[j] } else { 1.0 };
            for r in 0..rows {
                xc[(r, j)] = (data[r * p + j] - raw_means[j]) * scale;
            }
        }
        let var = (0..p)
            .map(|j| xc.column(j).iter().map(|x| x * x).sum::<f64>() / rows as f64)
            .collect();
        let means = if standardise {
            vec![0.0; p]
        } else {
            raw_means.clone()
        };
        Ok(Design {
            source,
            names,
            means,
            raw_means,
            raw_sds,
            var,
            xc,
            standardised: standardise,
            clusters: None,
        })
    }
}

fn sub(k: &str) -> Vec<Seg> {
    vec![key("design"), key(k)]
}

/// Read the `[design]` table (required by the regression templates).
pub fn from_ctx(ctx: &Ctx) -> Result<Design> {
    let t = ctx.raw.design.as_ref().ok_or_else(|| {
        ctx.err(&[], "the regression templates need a [design] table")
            .with_hint(
                "add\n  [design]\n  file = \"covariates.csv\"   # or: columns = 100, rows = 200",
            )
    })?;
    ctx.check_keys(&[key("design")], t, &KEYS)?;
    let standardise = match t.get("standardise") {
        None => false,
        Some(toml::Value::Boolean(b)) => *b,
        Some(v) => {
            return Err(ctx.err(
                &sub("standardise"),
                format!("expected true or false, found {v}"),
            ))
        }
    };
    let group = match t.get("group") {
        Some(v) => Some(ctx.string(&sub("group"), v)?),
        None => None,
    };
    let clusters = match t.get("clusters") {
        Some(v) => {
            if group.is_some() {
                return Err(ctx
                    .err(&sub("clusters"), "give `group` or `clusters`, not both")
                    .with_hint("`group` reads the clusters from a column of the file; `clusters = J` splits the rows into J"));
            }
            let j = ctx.count(&sub("clusters"), v)? as usize;
            if j < 2 {
                return Err(ctx.err(
                    &sub("clusters"),
                    format!("clusters = {j}: a multilevel model needs at least 2 clusters"),
                ));
            }
            Some(j)
        }
        None => None,
    };
    let mut d = match (t.get("file"), t.get("columns")) {
        (Some(_), Some(_)) => Err(ctx
            .err(
                &sub("columns"),
                "give either `file` or a synthetic design (`columns`, `rows`), not both",
            )
            .with_hint("remove `columns` to read the file")),
        (Some(f), None) => {
            for k in ["rows", "correlation", "rho", "seed"] {
                if t.contains_key(k) {
                    return Err(ctx.err(
                        &sub(k),
                        format!("`{k}` applies to a synthetic design, not to `file`"),
                    ));
                }
            }
            let name = ctx.string(&sub("file"), f)?;
            let path = ctx.resolve(name);
            read_csv_budget(&path, standardise, group, ctx.max_memory_mb)
        }
        (None, Some(c)) => {
            if group.is_some() {
                return Err(ctx
                    .err(&sub("group"), "`group` names a column of a design `file`")
                    .with_hint("for a synthetic design, give clusters = J"));
            }
            synthetic(ctx, t, c, standardise)
        }
        (None, None) => Err(ctx
            .err(
                &[key("design")],
                "[design] needs `file` or `columns` and `rows`",
            )
            .with_hint("file = \"covariates.csv\", or columns = 100, rows = 200")),
    }?;
    if let Some(j) = clusters {
        if j > d.rows() {
            return Err(ctx.err(
                &sub("clusters"),
                format!("clusters = {j} exceeds the {} rows of the design", d.rows()),
            ));
        }
        d.clusters = Some(Clusters::equal(d.rows(), j));
    }
    Ok(d)
}

fn synthetic(ctx: &Ctx, t: &toml::Table, c: &toml::Value, standardise: bool) -> Result<Design> {
    let p = ctx.count(&sub("columns"), c)? as usize;
    let n = match t.get("rows") {
        Some(v) => ctx.count(&sub("rows"), v)? as usize,
        None => {
            return Err(ctx
                .err(&[key("design")], "a synthetic design needs `rows`")
                .with_hint("e.g. rows = 200"))
        }
    };
    if p == 0 || n < 2 {
        return Err(ctx.err(
            &sub(if p == 0 { "columns" } else { "rows" }),
            format!("a design needs at least 1 column and 2 rows (found {p} × {n})"),
        ));
    }
    if n.saturating_mul(p) > MAX_CELLS {
        let at = crate::error::Location {
            file: ctx.file.map(std::path::Path::to_path_buf),
            line: ctx.map.line_of(&sub("rows")),
            key: Some("design.rows".into()),
        };
        return Err(Error::Limit(format!(
            "{at}: a design of {n} rows × {p} columns exceeds the limit of {MAX_CELLS} cells"
        )));
    }
    let rho = match t.get("rho") {
        Some(v) => Some(ctx.num(&sub("rho"), v)?),
        None => None,
    };
    let corr = match t.get("correlation") {
        None => Correlation::Independent,
        Some(v) => {
            let s = ctx.string(&sub("correlation"), v)?;
            match s {
                "independent" => Correlation::Independent,
                "ar1" | "exchangeable" => {
                    let r = rho.ok_or_else(|| {
                        ctx.err(
                            &sub("correlation"),
                            format!("correlation \"{s}\" needs `rho`"),
                        )
                    })?;
                    if s == "ar1" {
                        if !(r > -1.0 && r < 1.0) {
                            return Err(
                                ctx.err(&sub("rho"), format!("ar1 rho {r} must lie in (−1, 1)"))
                            );
                        }
                        Correlation::Ar1(r)
                    } else {
                        if !(0.0..1.0).contains(&r) {
                            return Err(ctx.err(
                                &sub("rho"),
                                format!("exchangeable rho {r} must lie in [0, 1)"),
                            ));
                        }
                        Correlation::Exchangeable(r)
                    }
                }
                other => {
                    return Err(ctx
                        .err(
                            &sub("correlation"),
                            format!("unknown correlation \"{other}\""),
                        )
                        .with_hint(choice_hint(other, &["independent", "ar1", "exchangeable"])))
                }
            }
        }
    };
    if rho.is_some() && corr == Correlation::Independent {
        return Err(ctx.err(
            &sub("rho"),
            "`rho` needs correlation = \"ar1\" or \"exchangeable\"",
        ));
    }
    let seed = match t.get("seed") {
        Some(v) => ctx.count(&sub("seed"), v)?,
        None => 1,
    };
    let data = synthetic_rows(n, p, corr, seed);
    let names = (1..=p).map(|j| format!("x{j}")).collect();
    let label = match corr {
        Correlation::Independent => "independent".to_string(),
        Correlation::Ar1(r) => format!("ar1 rho {r}"),
        Correlation::Exchangeable(r) => format!("exchangeable rho {r}"),
    };
    Design::from_rows(
        format!("synthetic {n} × {p} normal design ({label}, seed {seed})"),
        names,
        n,
        &data,
        standardise,
    )
    .map_err(|m| ctx.err(&sub("columns"), m))
}

/// Row-major n × p synthetic normal design.
pub fn synthetic_rows(n: usize, p: usize, corr: Correlation, seed: u64) -> Vec<f64> {
    use rayon::prelude::*;
    let mut data = vec![0.0; n * p];
    data.par_chunks_mut(p).enumerate().for_each(|(r, row)| {
        let mut rng = crate::rng::stream(seed, r as u64);
        let w = crate::numerics::norm_quantile(crate::rng::open01(&mut rng));
        let mut prev = 0.0;
        for (j, x) in row.iter_mut().enumerate() {
            let z = crate::numerics::norm_quantile(crate::rng::open01(&mut rng));
            *x = match corr {
                Correlation::Independent => z,
                Correlation::Ar1(rho) => {
                    if j == 0 {
                        z
                    } else {
                        rho * prev + (1.0 - rho * rho).sqrt() * z
                    }
                }
                Correlation::Exchangeable(rho) => rho.sqrt() * w + (1.0 - rho).sqrt() * z,
            };
            prev = *x;
        }
    });
    data
}

/// Read a CSV design: header row, numeric cells only.
pub fn read_csv(path: &Path, standardise: bool) -> Result<Design> {
    read_csv_grouped(path, standardise, None)
}

/// Read a CSV design whose column `group` (when given) holds each row's cluster
/// label (any text) rather than a covariate.
pub fn read_csv_grouped(path: &Path, standardise: bool, group: Option<&str>) -> Result<Design> {
    read_csv_budget(path, standardise, group, None)
}

/// Bytes the design holds per cell while it is read and prepared: the value
/// (8 B), its standardised copy (8 B) and the column-major copy the templates
/// build (8 B).
pub const BYTES_PER_CELL: u64 = 24;

/// Cells a design may have under a budget of `mb` MB (`None` = the default
/// budget): the budget's bytes over [`BYTES_PER_CELL`], never above
/// [`MAX_CELLS`].
pub fn max_cells(mb: Option<u64>) -> usize {
    let by_budget = crate::limits::bytes(crate::limits::budget_mb(mb)) / BYTES_PER_CELL;
    (by_budget.min(MAX_CELLS as u64)) as usize
}

/// [`read_csv_grouped`] counting the cells, as they are read, against the
/// memory budget `mb` ([`max_cells`]).
pub fn read_csv_budget(
    path: &Path,
    standardise: bool,
    group: Option<&str>,
    mb: Option<u64>,
) -> Result<Design> {
    let cell_cap = max_cells(mb);
    let loc = |line: Option<usize>, col: Option<&str>| Location {
        file: Some(path.to_path_buf()),
        line,
        key: col.map(str::to_string),
    };
    let file = std::fs::File::open(path).map_err(|e| Error::io(path, e))?;
    if file.metadata().is_ok_and(|m| m.is_dir()) {
        return Err(Error::io(
            path,
            std::io::Error::other("is a folder, not a CSV file"),
        ));
    }
    // Streamed through a guard: an endless device, a binary file or a line
    // without end stops with a clear error after a bounded read.
    let guarded = crate::limits::Guarded::new(file, crate::limits::TABLE_BYTES);
    let stopped = guarded.stopped();
    let what = "design file";
    let read_err = move |line: Option<usize>, e: csv::Error, doing: &str| -> Error {
        if let Some(s) = stopped.get() {
            return crate::limits::stop_error(path, what, s);
        }
        if let csv::ErrorKind::Utf8 { pos, err } = e.kind() {
            let line = pos.as_ref().map(|p| p.line() as usize).or(line);
            return Error::input(
                Location {
                    file: Some(path.to_path_buf()),
                    line,
                    key: None,
                },
                format!(
                    "the design file is not UTF-8 text: field {} holds bytes that are not valid \
                     UTF-8 (is it a binary file rather than a CSV file?)",
                    err.field() + 1
                ),
            )
            .with_hint("give a CSV file saved as UTF-8 text");
        }
        Error::input(
            Location {
                file: Some(path.to_path_buf()),
                line,
                key: None,
            },
            format!("{doing}: {e}"),
        )
    };
    let mut rdr = csv::ReaderBuilder::new()
        .has_headers(true)
        .flexible(true)
        .trim(csv::Trim::All)
        .from_reader(guarded);
    let names: Vec<String> = rdr
        .headers()
        .map_err(|e| read_err(Some(1), e, "cannot read the header"))?
        .iter()
        .map(str::to_string)
        .collect();
    if names.is_empty() || names.iter().all(String::is_empty) {
        return Err(Error::input(
            loc(Some(1), None),
            "the design file has no header row of column names",
        ));
    }
    for (j, n) in names.iter().enumerate() {
        if n.is_empty() {
            return Err(Error::input(
                loc(Some(1), None),
                format!("column {} has an empty name", j + 1),
            ));
        }
        if names[..j].contains(n) {
            return Err(Error::input(
                loc(Some(1), Some(n)),
                format!("column name `{n}` appears twice"),
            ));
        }
    }
    let gcol = match group {
        Some(g) => Some(names.iter().position(|n| n == g).ok_or_else(|| {
            let refs: Vec<&str> = names.iter().map(String::as_str).collect();
            Error::input(
                loc(Some(1), Some(g)),
                format!("[design] group = \"{g}\" is not a column of the file"),
            )
            .with_hint(choice_hint(g, &refs))
        })?),
        None => None,
    };
    let p = names.len();
    let mut data = Vec::new();
    let mut labels: Vec<String> = Vec::new();
    let mut sizes: Vec<usize> = Vec::new();
    let mut rows = 0usize;
    for rec in rdr.records() {
        let rec = rec.map_err(|e| {
            let line = e.position().map(|p| p.line() as usize);
            read_err(line, e, "cannot read the design")
        })?;
        let line = rec.position().map(|p| p.line() as usize);
        rows += 1;
        if rows.saturating_mul(p) > cell_cap {
            return Err(Error::Limit(format!(
                "{}: the design exceeds {cell_cap} cells at row {rows} ({p} columns; \
                 {BYTES_PER_CELL} bytes a cell against the memory limit of {} MB); \
                 raise it deliberately with --max-memory MB, or use fewer rows",
                path.display(),
                crate::limits::budget_mb(mb)
            )));
        }
        for (j, name) in names.iter().enumerate() {
            let cell = rec.get(j).unwrap_or("");
            if cell.is_empty() {
                return Err(Error::input(
                    loc(line, Some(name)),
                    format!("row {rows}, column `{name}`: missing value"),
                )
                .with_hint("every cell of the design must hold a number"));
            }
            if Some(j) == gcol {
                match labels.iter().position(|l| l == cell) {
                    Some(k) => sizes[k] += 1,
                    None => {
                        labels.push(cell.to_string());
                        sizes.push(1);
                    }
                }
                continue;
            }
            let x: f64 = cell
                .parse()
                .ok()
                .filter(|x: &f64| x.is_finite())
                .ok_or_else(|| {
                    Error::input(
                        loc(line, Some(name)),
                        format!("row {rows}, column `{name}`: \"{cell}\" is not a finite number"),
                    )
                    .with_hint("code categories as 0/1 indicator columns")
                })?;
            data.push(x);
        }
        if rec.len() > p {
            let extra = rec.get(p).unwrap_or("");
            return Err(Error::input(
                loc(line, None),
                format!(
                    "row {rows} has {} cells but the header names {p}: column {} holds \"{extra}\" \
                     and has no name",
                    rec.len(),
                    p + 1
                ),
            )
            .with_hint("every row needs one cell per header name; check for a stray comma"));
        }
    }
    if rows < 2 {
        return Err(Error::input(
            loc(Some(rows + 1), None),
            format!("the design has {rows} data rows; at least 2 are needed"),
        ));
    }
    let mut names = names;
    if let Some(g) = gcol {
        let gname = names.remove(g);
        if sizes.len() < 2 {
            return Err(Error::input(
                loc(None, Some(&gname)),
                format!(
                    "group column `{gname}` holds {} distinct label(s); a multilevel model needs at least 2 clusters",
                    sizes.len()
                ),
            ));
        }
        if names.is_empty() {
            return Err(Error::input(
                loc(Some(1), None),
                format!("the design has no covariate besides the group column `{gname}`"),
            ));
        }
    }
    let p = names.len();
    let clusters = gcol.map(|_| Clusters {
        name: group.unwrap_or("cluster").to_string(),
        sizes,
    });
    Design::from_rows(
        format!("{} ({rows} rows × {p} columns)", path.display()),
        names,
        rows,
        &data,
        standardise,
    )
    .map(|mut d| {
        d.clusters = clusters;
        d
    })
    .map_err(|m| {
        // Name the column (the message holds its name between backticks).
        let col = m.split('`').nth(1).map(str::to_string);
        Error::input(
            loc(None, col.as_deref()),
            format!("{m} (all {rows} data rows)"),
        )
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn standardised_columns_have_unit_variance() {
        let d = synthetic_rows(500, 3, Correlation::Ar1(0.6), 4);
        let des = Design::from_rows(
            "t".into(),
            vec!["a".into(), "b".into(), "c".into()],
            500,
            &d,
            true,
        )
        .unwrap();
        for v in &des.var {
            assert!((v - 1.0).abs() < 1e-12);
        }
        // Sample lag-1 correlation of an AR(1) design near ρ = 0.6: 4 SE, SE ≈ (1−ρ²)/√n.
        let x = &des.xc;
        let c: f64 = (0..500).map(|r| x[(r, 0)] * x[(r, 1)]).sum::<f64>() / 500.0;
        assert!((c - 0.6).abs() < 4.0 * (1.0 - 0.36) / 500f64.sqrt(), "{c}");
    }

    #[test]
    fn csv_errors_name_row_and_column() {
        let dir = tempfile::tempdir().unwrap();
        let p = dir.path().join("x.csv");
        std::fs::write(&p, "a,b\n1,2\n3,oops\n").unwrap();
        let e = read_csv(&p, false).unwrap_err().to_string();
        assert!(
            e.contains(":3") && e.contains("`b`") && e.contains("oops"),
            "{e}"
        );
        std::fs::write(&p, "a,b\n1,2\n3,\n").unwrap();
        let e = read_csv(&p, false).unwrap_err().to_string();
        assert!(e.contains("missing value") && e.contains("row 2"), "{e}");
        std::fs::write(&p, "a,b\n1,2\n3,4\n5,6\n").unwrap();
        let d = read_csv(&p, true).unwrap();
        assert_eq!(d.rows(), 3);
        assert!((d.var[1] - 1.0).abs() < 1e-12);
    }
}
