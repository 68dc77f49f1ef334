//! The bad-input catalogue for design CSV files (`[design] file = …`, regression
//! templates) and batch tables: each mistake gives a non-zero exit, a message naming
//! the file, the line (row), the column and the bad value, no panic text, and no
//! output folder.

mod common;
use common::*;
use std::path::Path;

const LINEAR: &str = include_str!("../model-templates/linear.toml");

/// The linear starter reading its design from `x.csv` (standardised or not).
fn spec_with_csv(standardise: bool) -> String {
    let start = LINEAR.find("[design]").expect("starter has [design]");
    let end = LINEAR
        .find("[simulation]")
        .expect("starter has [simulation]");
    format!(
        "{}[design]\nfile = \"x.csv\"\nstandardise = {standardise}\n\n{}",
        &LINEAR[..start],
        &LINEAR[end..]
    )
    .replace("draws = 4000", "draws = 500")
}

/// Run `check` and `fit` with design text `csv` (None: no file); both must fail
/// with exit `code`, name the design file and print every needle.
fn assert_bad_csv(csv: Option<&str>, standardise: bool, code: i32, needles: &[&str]) {
    let d = tempfile::tempdir().unwrap();
    let spec = write(d.path(), "beliefs.toml", &spec_with_csv(standardise));
    if let Some(c) = csv {
        write(d.path(), "x.csv", c);
    }
    assert_rejected(d.path(), &spec, "x.csv", code, needles);
}

#[test]
fn a_good_csv_design_is_accepted() {
    // The control case: the same spec with a clean file validates.
    let d = tempfile::tempdir().unwrap();
    let spec = write(d.path(), "beliefs.toml", &spec_with_csv(true));
    write(d.path(), "x.csv", "a,b,c\n1,2,0\n2,0,1\n3,1,1\n4,5,0\n");
    let r = run(&["check", spec.to_str().unwrap()]);
    assert!(r.status.success(), "{}", stderr(&r));
}

#[test]
fn ragged_rows() {
    // A short row: the missing cell is named by line, row and column.
    assert_bad_csv(
        Some("a,b,c\n1,2,3\n4,5\n6,7,8\n"),
        false,
        3,
        &["x.csv:3", "`c`", "row 2", "missing value"],
    );
    // A long row: the extra cell's position and text.
    assert_bad_csv(
        Some("a,b\n1,2\n3,4\n5,6,77\n"),
        false,
        3,
        &["x.csv:4", "row 3 has 3 cells", "column 3", "\"77\""],
    );
}

#[test]
fn text_cells() {
    assert_bad_csv(
        Some("age,dose\n50,1\n61,high\n"),
        false,
        3,
        &[
            "x.csv:3",
            "key `dose`",
            "row 2",
            "\"high\"",
            "not a finite number",
        ],
    );
}

#[test]
fn nan_and_infinite_cells() {
    for bad in ["NaN", "nan", "inf", "-inf", "1e999"] {
        assert_bad_csv(
            Some(&format!("a,b\n1,2\n3,{bad}\n5,6\n")),
            false,
            3,
            &[
                "x.csv:3",
                "key `b`",
                "row 2",
                &format!("\"{bad}\""),
                "finite",
            ],
        );
    }
}

#[test]
fn empty_file_and_header_only() {
    assert_bad_csv(Some(""), false, 3, &["x.csv:1", "no header row"]);
    assert_bad_csv(Some("a,b,c\n"), false, 3, &["0 data rows", "at least 2"]);
    assert_bad_csv(Some("a,b,c\n1,2,3\n"), false, 3, &["1 data rows"]);
    assert_bad_csv(
        Some("a,,c\n1,2,3\n4,5,6\n"),
        false,
        3,
        &["x.csv:1", "column 2", "empty name"],
    );
    assert_bad_csv(
        Some("a,b,a\n1,2,3\n4,5,6\n"),
        false,
        3,
        &["x.csv:1", "`a` appears twice"],
    );
}

#[test]
fn constant_column_when_standardising() {
    assert_bad_csv(
        Some("a,b\n1,7\n2,7\n3,7\n"),
        true,
        3,
        &[
            "key `b`",
            "`b` is constant (7)",
            "standardised",
            "3 data rows",
        ],
    );
    // Values so large that the mean overflows are refused, not turned into NaN.
    assert_bad_csv(
        Some("a,b\n1,1e308\n2,1.5e308\n3,1.7e308\n"),
        false,
        3,
        &["key `b`", "too large"],
    );
}

#[test]
fn missing_file() {
    assert_bad_csv(None, false, 4, &["x.csv"]);
}

// ---- batch tables -------------------------------------------------------------

const CURE: &str = include_str!("../model-templates/mixture-cure.toml");

fn batch(dir: &Path, table: &str, extra: &[&str]) -> (std::process::Output, std::path::PathBuf) {
    let base = write(
        dir,
        "base.toml",
        &CURE.replace("draws = 20000", "draws = 500"),
    );
    let t = write(dir, "t.csv", table);
    let out = dir.join("out");
    let mut args = vec![
        "batch",
        t.to_str().unwrap(),
        "--spec",
        base.to_str().unwrap(),
        "--out",
        out.to_str().unwrap(),
        "-q",
    ];
    args.extend(extra);
    (run(&args), out)
}

fn errors_csv(out: &Path) -> String {
    std::fs::read_to_string(out.join("errors.csv")).unwrap_or_default()
}

#[test]
fn batch_unknown_column_address_and_bad_cells() {
    let d = tempfile::tempdir().unwrap();
    let (r, out) = batch(
        d.path(),
        "id,prior.cure_logit.sdd,prior.log_scale.sd,belief.2.horizon\n\
         typo,0.5,,\n\
         text,,wide,\n\
         nan,,nan,\n\
         neg,,,-3\n",
        &[],
    );
    let err = stderr(&r);
    assert_eq!(r.status.code(), Some(3), "{err}");
    assert!(!err.contains("panicked"), "{err}");
    assert!(
        err.contains("t.csv") && err.contains("4 of 4 rows failed"),
        "{err}"
    );
    let e = errors_csv(&out);
    for want in [
        // unknown key below a prior table: file, line, column, row, value, suggestion
        "t.csv:2: key `prior.cure_logit.sdd`: row 1 (id \"\"typo\"\"), value \"\"0.5\"\"",
        "did you mean `sd`",
        "t.csv:3: key `prior.log_scale.sd`: row 2 (id \"\"text\"\"), value \"\"wide\"\"",
        "t.csv:4: key `prior.log_scale.sd`: row 3 (id \"\"nan\"\"), value \"\"nan\"\"",
        "t.csv:5: key `belief.2.horizon`: row 4 (id \"\"neg\"\"), value \"\"-3\"\"",
    ] {
        assert!(e.contains(want), "missing {want:?} in\n{e}");
    }
    assert!(!e.contains("panicked"), "{e}");
}

#[test]
fn batch_duplicate_ids_name_both_rows() {
    let d = tempfile::tempdir().unwrap();
    let (r, out) = batch(
        d.path(),
        "id,simulation.seed\nsame,1\nother,2\nsame,3\n",
        &[],
    );
    assert_eq!(r.status.code(), Some(3), "{}", stderr(&r));
    let e = errors_csv(&out);
    assert!(
        e.contains("t.csv:4: column `id`, row 3: id \"\"same\"\" repeats the id of row 1"),
        "{e}"
    );
    assert_eq!(e.lines().count(), 2, "{e}");
}

#[test]
fn batch_empty_tables_are_refused_before_any_output() {
    for (table, needle) in [
        ("", "no `id` column"),
        ("id,simulation.seed\n", "no data rows"),
        ("id,simulation.seed\n# only a comment\n", "no data rows"),
        ("id,a..b\nx,1\n", "empty key segment"),
        ("id,\"unclosed\nx,1\n", "t.csv"),
    ] {
        let d = tempfile::tempdir().unwrap();
        let (r, out) = batch(d.path(), table, &[]);
        let err = stderr(&r);
        assert_eq!(r.status.code(), Some(3), "{table:?}: {err}");
        assert!(!err.contains("panicked"), "{err}");
        assert!(
            err.contains("t.csv") && err.contains(needle),
            "{table:?}: {err}"
        );
        assert!(!out.exists(), "{table:?}: output created");
    }
}

// ---- resource limits ----------------------------------------------------------

#[test]
fn batch_row_cap_is_checked_before_work_and_can_be_raised() {
    // 100,001 rows exceed the default cap of 100,000 (limits::MAX_BATCH_ROWS).
    let mut t = String::from("id,simulation.seed\n");
    for i in 0..100_001 {
        t.push_str(&format!("r{i},\n"));
    }
    let d = tempfile::tempdir().unwrap();
    let (r, out) = batch(d.path(), &t, &[]);
    let err = stderr(&r);
    assert_eq!(r.status.code(), Some(5), "{err}");
    assert!(
        err.contains("100001 data rows, over the limit of 100000"),
        "{err}"
    );
    assert!(err.contains(" MB") && err.contains("--max-memory"), "{err}");
    assert!(!out.exists());
    // A small budget scales the cap down: 1 MB allows 100000 / 4096 = 24 rows.
    let mut t = String::from("id,simulation.seed\n");
    for i in 0..25 {
        t.push_str(&format!("r{i},\n"));
    }
    let (r, out) = batch(d.path(), &t, &["--max-memory", "1"]);
    let err = stderr(&r);
    assert_eq!(r.status.code(), Some(5), "{err}");
    assert!(err.contains("25 data rows, over the limit of 24"), "{err}");
    assert!(!out.exists());
}

#[test]
fn regression_memory_cap_names_draws_columns_and_megabytes() {
    // 200 columns, regularised horseshoe (a recomputed kind): per draw 16 × 200 B of
    // base variates (normals and local variates),
    // twice (fit + fresh): 2,000,000 draws need ~13 GB, over the 4,096 MB default.
    let d = tempfile::tempdir().unwrap();
    let rhs = LINEAR.replace(
        "family = \"r2d2\"\na = { fit = [0.2, 30.0] }\nb = { fit = [0.2, 30.0] }\nconcentration = 0.5",
        "family = \"regularised-horseshoe\"\nglobal_scale = { fit = [0.0001, 1.0] }\nslab_scale = 2.0\nslab_df = 4\n#",
    );
    assert_ne!(rhs, LINEAR, "test setup: r2d2 block not in the starter");
    let spec = write(d.path(), "beliefs.toml", &rhs);
    let out = d.path().join("out");
    let r = run(&[
        "--threads",
        "1",
        "fit",
        spec.to_str().unwrap(),
        "--draws",
        "2000000",
        "--out",
        out.to_str().unwrap(),
    ]);
    let err = stderr(&r);
    assert_eq!(r.status.code(), Some(5), "{err}");
    assert!(err.contains("beliefs.toml"), "{err}");
    assert!(err.contains("2000000 draws × 200 design columns"), "{err}");
    assert!(err.contains("over the limit of 4096 MB"), "{err}");
    assert!(err.contains("--max-memory"), "{err}");
    assert!(!out.exists());
    // The estimate (one thread): a set of base draws costs 16 × 200 B = 3.2 kB a
    // draw plus the prior columns and one simulation's vectors (~0.2 kB); a fit
    // holds the fitting set, the coarse set (2^19 draws) and one replicate set:
    // 4.52e6 × 3.37 kB ≈ 15,240 MB, plus the horseshoe table (2e6 × 1,072 B ≈
    // 2,140 MB), plus 15 % ⇒ ≈ 19,990 MB (templates::fit_peak_bytes).
    let mb: u64 = err
        .split("about ")
        .nth(1)
        .and_then(|s| s.split(' ').next())
        .and_then(|s| s.parse().ok())
        .expect("MB figure in the message");
    assert!((19_000..21_000).contains(&mb), "{mb} MB: {err}");
    // The starter's 4,000 draws need ~45 MB: a 10 MB budget refuses them, `check` too.
    let r = run(&["--max-memory", "10", "check", spec.to_str().unwrap()]);
    assert_eq!(r.status.code(), Some(5), "{}", stderr(&r));
    assert!(
        stderr(&r).contains("over the limit of 10 MB"),
        "{}",
        stderr(&r)
    );
    // Raising the budget deliberately lets the same file through.
    let r = run(&["--max-memory", "20000", "check", spec.to_str().unwrap()]);
    assert!(r.status.success(), "{}", stderr(&r));
}

#[test]
fn design_cells_are_counted_against_the_memory_limit_while_reading() {
    // 1,000 rows × 50 columns = 50,000 cells; at 24 bytes a cell (value,
    // standardised copy, column-major copy: design::BYTES_PER_CELL) a 1 MB budget
    // holds 41,666 cells, so reading stops at row 834 (834 × 50 > 41,666).
    let d = tempfile::tempdir().unwrap();
    let spec = write(d.path(), "beliefs.toml", &spec_with_csv(true));
    let mut csv = (0..50)
        .map(|j| format!("x{j}"))
        .collect::<Vec<_>>()
        .join(",");
    csv.push('\n');
    for i in 0..1000 {
        let row: Vec<String> = (0..50)
            .map(|j| format!("{}", (i * 7 + j * 3) % 11))
            .collect();
        csv.push_str(&row.join(","));
        csv.push('\n');
    }
    write(d.path(), "x.csv", &csv);
    let r = run(&["--max-memory", "1", "check", spec.to_str().unwrap()]);
    let err = stderr(&r);
    assert_eq!(r.status.code(), Some(5), "{err}");
    for needle in [
        "x.csv",
        "41666 cells",
        "row 834",
        "50 columns",
        "1 MB",
        "--max-memory",
    ] {
        assert!(err.contains(needle), "missing `{needle}`: {err}");
    }
    let out = d.path().join("out");
    let r = run(&[
        "--max-memory",
        "1",
        "fit",
        spec.to_str().unwrap(),
        "--out",
        out.to_str().unwrap(),
    ]);
    assert_eq!(r.status.code(), Some(5), "{}", stderr(&r));
    assert!(!out.exists());
    // The default budget reads it.
    let r = run(&["check", spec.to_str().unwrap()]);
    assert!(r.status.success(), "{}", stderr(&r));
}
