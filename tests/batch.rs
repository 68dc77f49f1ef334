//! Integration tests of `priorsmith batch` and `priorsmith merge`: the real binary
//! on temporary files. One invented two-belief cure model, 200 generated rows at
//! 2000 draws.

mod common;

use std::path::{Path, PathBuf};

const ROWS: usize = 200;
/// Rows of the kill and shard checks (the first KROWS of the same generator).
const KROWS: usize = 80;

/// The base file; `{MED}`, `{ALPHA}`, `{HORIZON}`, `{SEED}` are filled in for the
/// separate `fit` runs by plain text substitution (independent of the batch's
/// column addressing).
const TEMPLATE: &str = r#"
title = "batch test (invented)"
[model]
template = "mixture-cure"
latency = "exponential"
[simulation]
draws = 2000
seed = {SEED}
[prior.cure_logit]
family = "normal"
mean = { fit = [-4.0, 4.0] }
sd = { fit = [0.05, 2.5] }
[prior.log_scale]
family = "normal"
mean = { fit = [0.0, 5.0] }
sd = 0.3
[[belief]]
quantity = "cure_fraction"
quantiles = { "0.1" = 0.15, "0.5" = {MED}, "0.9" = 0.40 }
[[belief]]
quantity = "survival_prob"
horizon = {HORIZON}
distribution = { family = "beta", alpha = {ALPHA}, beta = 18 }
"#;

fn row_values(k: usize) -> (String, f64, u32, u32, u64) {
    let med = 0.18 + 0.02 * (k % 10) as f64;
    let alpha = 8 + (k % 9) as u32;
    let horizon = [24, 36, 48][k % 3];
    let seed = 100 + k as u64;
    (format!("e{k:03}"), med, alpha, horizon, seed)
}

fn fill(med: f64, alpha: u32, horizon: u32, seed: u64) -> String {
    TEMPLATE
        .replace("{MED}", &format!("{med}"))
        .replace("{ALPHA}", &alpha.to_string())
        .replace("{HORIZON}", &horizon.to_string())
        .replace("{SEED}", &seed.to_string())
}

/// Base file (row 0's values) and a table of `n` rows in `dir`.
fn setup(dir: &Path, n: usize) -> (PathBuf, PathBuf) {
    setup_named(dir, n, "table.csv")
}

fn setup_named(dir: &Path, n: usize, name: &str) -> (PathBuf, PathBuf) {
    let base = dir.join("base.toml");
    std::fs::write(&base, fill(0.25, 12, 36, 1)).unwrap();
    let mut t = String::from(
        "id,belief.1.quantiles.0.5,belief.2.distribution.alpha,belief.2.horizon,simulation.seed\n",
    );
    for k in 0..n {
        let (id, m, a, h, s) = row_values(k);
        t.push_str(&format!("{id},{m},{a},{h},{s}\n"));
    }
    let table = dir.join(name);
    std::fs::write(&table, t).unwrap();
    (base, table)
}

fn batch(base: &Path, table: &Path, out: &Path, extra: &[&str]) -> std::process::Output {
    common::bin()
        .args(["-q", "batch"])
        .arg(table)
        .arg("--spec")
        .arg(base)
        .arg("--out")
        .arg(out)
        .args(extra)
        .output()
        .unwrap()
}

/// The hyperparameters of a fit.json as exact bits. The number text is parsed
/// with Rust's correctly rounded `str::parse` (serde_json's default float parser
/// may differ from it in the last bit).
fn hypers(p: &Path) -> Vec<(String, u64)> {
    let text = std::fs::read_to_string(p).unwrap();
    let v: serde_json::Value = serde_json::from_str(&text).unwrap();
    let block = text.split("\"hyperparameters\": {").nth(1).unwrap();
    let block = &block[..block.find('}').unwrap()];
    let names: Vec<String> = v["hyperparameters"]
        .as_object()
        .unwrap()
        .keys()
        .cloned()
        .collect();
    names
        .into_iter()
        .map(|k| {
            let at = block.find(&format!("\"{k}\": ")).unwrap() + k.len() + 4;
            let num: String = block[at..]
                .chars()
                .take_while(|c| !matches!(c, ',' | '\n'))
                .collect();
            (k, num.trim().parse::<f64>().unwrap().to_bits())
        })
        .collect()
}

fn read(p: &Path) -> String {
    std::fs::read_to_string(p).unwrap_or_else(|e| panic!("{}: {e}", p.display()))
}

#[test]
fn batch_equals_fits_survives_kill_and_shards_merge() {
    let d = tempfile::tempdir().unwrap();
    let (base, table) = setup(d.path(), ROWS);

    // 1. Uninterrupted run.
    let whole = d.path().join("whole");
    let o = batch(&base, &table, &whole, &[]);
    assert!(o.status.success(), "{}", String::from_utf8_lossy(&o.stderr));
    let results = read(&whole.join("results.csv"));
    assert_eq!(results.lines().count(), ROWS + 1);
    assert_eq!(read(&whole.join("errors.csv")).lines().count(), 1);

    // 2. Every row equals a separate `fit` of the same beliefs (two at a time).
    let fits = d.path().join("fits");
    std::fs::create_dir_all(&fits).unwrap();
    std::thread::scope(|s| {
        for half in 0..2 {
            let fits = &fits;
            let whole = &whole;
            s.spawn(move || {
                for k in (half..ROWS).step_by(2) {
                    let (id, m, a, h, seed) = row_values(k);
                    let spec = fits.join(format!("{id}.toml"));
                    std::fs::write(&spec, fill(m, a, h, seed)).unwrap();
                    let out = fits.join(&id);
                    let st = common::bin()
                        .args(["-q", "--threads", "1", "fit"])
                        .arg(&spec)
                        .arg("--out")
                        .arg(&out)
                        .status()
                        .unwrap();
                    assert!(st.success(), "fit {id}");
                    assert_eq!(
                        hypers(&out.join("fit.json")),
                        hypers(&whole.join("models").join(&id).join("fit.json")),
                        "row {id}"
                    );
                }
            });
        }
    });
    // …and results.csv carries the same numbers.
    let mut rdr = csv::Reader::from_reader(results.as_bytes());
    let head = rdr.headers().unwrap().clone();
    for rec in rdr.records() {
        let rec = rec.unwrap();
        let h = hypers(&fits.join(&rec[0]).join("fit.json"));
        for (name, bits) in h {
            let c = head.iter().position(|x| x == name).unwrap();
            assert_eq!(
                rec[c].parse::<f64>().unwrap().to_bits(),
                bits,
                "{} {name}",
                &rec[0]
            );
        }
    }

    // 3. Killed part-way (SIGKILL), then rerun: the same results.csv as an
    // uninterrupted run, which for the first KROWS rows is the first KROWS lines
    // of the 200-row results (rows are independent of each other).
    let (_, table) = setup_named(d.path(), KROWS, "table80.csv");
    let results: String = results
        .lines()
        .take(KROWS + 1)
        .map(|l| format!("{l}\n"))
        .collect();
    let killed = d.path().join("killed");
    // The process aborts (as on a crash: no clean-up, rows in flight half
    // written) once 20 rows are committed: deterministic, unlike a timed kill.
    let o = common::bin()
        .args(["-q", "--threads", "2", "batch"])
        .arg(&table)
        .arg("--spec")
        .arg(&base)
        .arg("--out")
        .arg(&killed)
        .env("PRIORSMITH_TEST_ABORT_AFTER_ROWS", "20")
        .output()
        .unwrap();
    assert!(!o.status.success(), "the batch should have aborted");
    assert!(!killed.join("results.csv").exists());
    let ok_before = std::fs::read_dir(killed.join("rows"))
        .unwrap()
        .flatten()
        .filter(|e| {
            let n = e.file_name().to_string_lossy().to_string();
            n.ends_with(".json") && read(&e.path()).contains("\"status\": \"ok\"")
        })
        .count();
    // With two threads the other may commit its row as the 20th lands.
    assert!((20..=21).contains(&ok_before), "{ok_before} rows committed");
    let o = common::bin()
        .arg("batch")
        .arg(&table)
        .arg("--spec")
        .arg(&base)
        .arg("--out")
        .arg(&killed)
        .output()
        .unwrap();
    assert!(o.status.success(), "{}", String::from_utf8_lossy(&o.stderr));
    let text = String::from_utf8_lossy(&o.stdout);
    // The rerun skipped exactly the rows committed before the crash…
    assert!(
        text.contains(&format!("{ok_before} already done")),
        "{text}"
    );
    // …and its table equals an uninterrupted run's.
    assert_eq!(read(&killed.join("results.csv")), results);

    // 4. Four shards in four folders, merged, equal the whole.
    let mut dirs = Vec::new();
    for i in 1..=4 {
        let sd = d.path().join(format!("shard{i}"));
        let o = batch(&base, &table, &sd, &["--shard", &format!("{i}/4")]);
        assert!(o.status.success(), "{}", String::from_utf8_lossy(&o.stderr));
        let part = read(&sd.join(format!("results-shard-{i}-of-4.csv")));
        assert_eq!(part.lines().count(), KROWS / 4 + 1);
        dirs.push(sd);
    }
    let merged = d.path().join("merged");
    let st = common::bin()
        .args(["-q", "merge"])
        .args(&dirs)
        .arg("--out")
        .arg(&merged)
        .status()
        .unwrap();
    assert!(st.success());
    assert_eq!(read(&merged.join("results.csv")), results);
    assert_eq!(
        read(&merged.join("errors.csv")),
        read(&whole.join("errors.csv"))
    );
    // A merge with a shard missing names the missing rows.
    let o = common::bin()
        .args(["merge"])
        .args(&dirs[..3])
        .arg("--out")
        .arg(d.path().join("partial"))
        .output()
        .unwrap();
    assert!(!o.status.success());
    assert!(String::from_utf8_lossy(&o.stderr).contains("no current result for row(s) 61"));
}

#[test]
fn bad_rows_are_reported_and_the_others_run() {
    let d = tempfile::tempdir().unwrap();
    let (base, _) = setup(d.path(), 0);
    let table = d.path().join("t.csv");
    std::fs::write(
        &table,
        "id,belief.2.distribution.alpha,belief.1.quantiles.0.5,belief.7.quantity\n\
         good,10,,\n\
         bad-alpha,abc,,\n\
         bad-quantile,,0.9,\n\
         bad/id,10,,\n\
         good,11,,\n\
         bad-path,,,rmst\n\
         also-good,14,0.3,\n",
    )
    .unwrap();
    let out = d.path().join("o");
    let o = batch(&base, &table, &out, &[]);
    assert_eq!(
        o.status.code(),
        Some(3),
        "{}",
        String::from_utf8_lossy(&o.stderr)
    );
    let res = read(&out.join("results.csv"));
    let ids: Vec<&str> = res
        .lines()
        .skip(1)
        .map(|l| l.split(',').next().unwrap())
        .collect();
    assert_eq!(ids, ["good", "also-good"]);
    let errs = read(&out.join("errors.csv"));
    let t = table.display().to_string();
    for want in [
        format!("{t}:3: key `belief.2.distribution.alpha`: row 2 (id \"\"bad-alpha\"\"), value \"\"abc\"\""),
        "expected a number, found \"\"abc\"\"".to_string(),
        format!("{t}:4: key `belief.1.quantiles.0.5`: row 3 (id \"\"bad-quantile\"\"), value \"\"0.9\"\""),
        "quantiles must increase".to_string(),
        "contains `/`".to_string(),
        "repeats the id of row 1".to_string(),
        "column `belief.7.quantity`, row 6 (id \"\"bad-path\"\"), value \"\"rmst\"\"".to_string(),
        "position 7 does not exist".to_string(),
    ] {
        assert!(errs.contains(&want), "missing {want:?} in\n{errs}");
    }
    assert_eq!(errs.lines().count(), 6);
    // A table without an id column is refused as a whole, naming the file.
    std::fs::write(&table, "name,simulation.seed\na,1\n").unwrap();
    let o = batch(&base, &table, &out, &[]);
    assert_eq!(o.status.code(), Some(3));
    assert!(String::from_utf8_lossy(&o.stderr).contains("no `id` column"));
}

/// Lean model folders (the default) hold fit.json without held profiles,
/// summary.txt and spec.toml; `--model-files full` adds draws.csv and the
/// profiles. The fitted numbers and the results table are the same either way.
#[test]
fn lean_and_full_model_folders_hold_the_same_fit() {
    let d = tempfile::tempdir().unwrap();
    let (base, table) = setup(d.path(), 3);
    let (lean, full) = (d.path().join("lean"), d.path().join("full"));
    let o = batch(&base, &table, &lean, &[]);
    assert!(o.status.success(), "{}", String::from_utf8_lossy(&o.stderr));
    let o = batch(&base, &table, &full, &["--model-files", "full"]);
    assert!(o.status.success(), "{}", String::from_utf8_lossy(&o.stderr));
    // Every column but `evaluations` (the full folders' profiles cost evaluations).
    let table_of = |p: &Path| -> Vec<String> {
        read(&p.join("results.csv"))
            .lines()
            .map(|l| l.rsplit_once(',').unwrap().0.to_string())
            .collect()
    };
    let header = read(&lean.join("results.csv"));
    assert!(header.lines().next().unwrap().ends_with(",evaluations"));
    assert_eq!(table_of(&lean), table_of(&full));
    for k in 0..3 {
        let (id, ..) = row_values(k);
        let (l, f) = (lean.join("models").join(&id), full.join("models").join(&id));
        assert_eq!(
            hypers(&l.join("fit.json")),
            hypers(&f.join("fit.json")),
            "row {id}"
        );
        assert!(!l.join("draws.csv").exists(), "lean folder has draws.csv");
        assert!(f.join("draws.csv").exists(), "full folder lacks draws.csv");
        assert!(l.join("spec.toml").exists() && l.join("summary.txt").exists());
        let json = |p: &Path| -> serde_json::Value {
            serde_json::from_str(&read(&p.join("fit.json"))).unwrap()
        };
        let profiles =
            |v: &serde_json::Value| v["identifiability"]["profiles"].as_object().unwrap().len();
        let (jl, jf) = (json(&l), json(&f));
        assert_eq!(profiles(&jl), 0, "lean fit.json traces profiles");
        let free = jf["free"].as_array().unwrap().len();
        assert!(free > 0);
        assert_eq!(
            profiles(&jf),
            free,
            "full fit.json: one profile per free hyperparameter"
        );
    }
    // A misspelt choice is a usage error naming the choices.
    let o = batch(
        &base,
        &table,
        &d.path().join("x"),
        &["--model-files", "thin"],
    );
    assert_eq!(o.status.code(), Some(2));
    assert!(String::from_utf8_lossy(&o.stderr).contains("lean, full"));
}

/// Cancellation (the token Ctrl-C sets) stops a batch between evaluations:
/// `run` returns `Error::Cancelled`, writes no tables and no record for the
/// rows it cut short, and a rerun gives the uninterrupted run's table. The
/// token's poll-count hook makes the stop deterministic.
#[test]
fn cancelled_batch_resumes_to_the_same_table() {
    use priorsmith::batch::{self, RunOptions};
    use priorsmith::cancel::Cancel;
    use priorsmith::spec::Overrides;
    let d = tempfile::tempdir().unwrap();
    let (base, table) = setup(d.path(), 6);
    let ov = |cancel: Cancel| Overrides {
        draws: Some(2048),
        cancel,
        ..Overrides::default()
    };
    let opts = RunOptions::default();
    let whole = d.path().join("whole");
    let plan = batch::plan(&base, &table, &ov(Cancel::new())).unwrap();
    batch::run(&plan, &whole, &opts, &|_| {}).unwrap();

    let cut = d.path().join("cut");
    // About two rows' worth of evaluations.
    let plan = batch::plan(&base, &table, &ov(Cancel::after(1500))).unwrap();
    let e = batch::run(&plan, &cut, &opts, &|_| {}).unwrap_err();
    assert!(matches!(e, priorsmith::Error::Cancelled), "{e}");
    assert!(!cut.join("results.csv").exists());
    let records = std::fs::read_dir(cut.join("rows")).unwrap().count();
    assert!(records < 6, "{records} records: the cancel came too late");
    // Every record left is a finished row: none for a row the cancel cut short.
    for e in std::fs::read_dir(cut.join("rows")).unwrap().flatten() {
        let text = read(&e.path());
        assert!(text.contains("\"status\": \"ok\""), "{text}");
    }
    let plan = batch::plan(&base, &table, &ov(Cancel::new())).unwrap();
    let rep = batch::run(&plan, &cut, &opts, &|_| {}).unwrap();
    assert_eq!(rep.skipped, records);
    assert_eq!(
        read(&cut.join("results.csv")),
        read(&whole.join("results.csv"))
    );
}

/// A base file without `draws` (precision mode) fits each row at
/// `batch::BATCH_DRAWS` scrambled Sobol points, and the row's spec.toml says so:
/// `fit models/<id>/spec.toml` gives the row's hyperparameters to the last bit.
#[test]
fn rows_left_to_precision_mode_fit_at_batch_draws_and_refit_the_same() {
    let d = tempfile::tempdir().unwrap();
    let base = d.path().join("base.toml");
    std::fs::write(&base, fill(0.25, 12, 36, 1).replace("draws = 2000\n", "")).unwrap();
    let table = d.path().join("t.csv");
    std::fs::write(&table, "id,simulation.seed\nr1,5\n").unwrap();
    let out = d.path().join("b");
    let o = batch(&base, &table, &out, &[]);
    assert!(o.status.success(), "{}", String::from_utf8_lossy(&o.stderr));
    let m = out.join("models").join("r1");
    let v: serde_json::Value = serde_json::from_str(&read(&m.join("fit.json"))).unwrap();
    assert_eq!(v["draws"], priorsmith::batch::BATCH_DRAWS as u64);
    assert!(
        read(&m.join("spec.toml")).contains(&format!("draws = {}", priorsmith::batch::BATCH_DRAWS))
    );
    let refit = d.path().join("refit");
    let st = common::bin()
        .args(["-q", "fit"])
        .arg(m.join("spec.toml"))
        .arg("--out")
        .arg(&refit)
        .status()
        .unwrap();
    assert!(st.success());
    assert_eq!(hypers(&refit.join("fit.json")), hypers(&m.join("fit.json")));
}

/// A misspelt column stops the batch before any fit, naming the column, with
/// "did you mean"; no output folder is created.
#[test]
fn misspelt_column_is_refused_before_any_fit() {
    let d = tempfile::tempdir().unwrap();
    let base = d.path().join("base.toml");
    std::fs::write(&base, common::EXAMPLE).unwrap();
    for (col, want) in [
        ("simulaton.seed", "did you mean `simulation`"),
        ("prior.cure_logt.sd", "did you mean `cure_logit`"),
    ] {
        let table = d.path().join("t.csv");
        std::fs::write(&table, format!("id,{col}\na,3\nb,4\n")).unwrap();
        let out = d.path().join("o");
        let o = common::run(&[
            "batch",
            table.to_str().unwrap(),
            "--spec",
            base.to_str().unwrap(),
            "--out",
            out.to_str().unwrap(),
        ]);
        let err = common::stderr(&o);
        assert_eq!(o.status.code(), Some(3), "{err}");
        assert!(err.contains(&format!("column `{col}`")), "{err}");
        assert!(err.contains(want), "{err}");
        assert!(err.contains("before any row was fitted"), "{err}");
        assert!(!out.exists(), "{col}: output folder created");
    }
}

/// A batch folder is never swapped, so a folder holding another batch (or a
/// fit) is refused before anything is written; the same batch resumes.
#[test]
fn another_batchs_folder_is_refused_and_left_alone() {
    let d = tempfile::tempdir().unwrap();
    let (base, table) = setup(d.path(), 2);
    let out = d.path().join("b");
    assert!(batch(&base, &table, &out, &[]).status.success());
    let before = read(&out.join("results.csv"));
    // The same batch again: resumes (nothing to do) without a flag.
    assert!(batch(&base, &table, &out, &[]).status.success());
    // Another table into the same folder.
    let (_, other) = setup_named(d.path(), 3, "other.csv");
    let o = batch(&base, &other, &out, &[]);
    let err = String::from_utf8_lossy(&o.stderr).to_string();
    assert_eq!(o.status.code(), Some(4), "{err}");
    assert!(err.contains("holds another batch"), "{err}");
    assert_eq!(read(&out.join("results.csv")), before);
    // A fit's folder.
    let fitdir = d.path().join("fit");
    std::fs::create_dir(&fitdir).unwrap();
    std::fs::write(fitdir.join("fit.json"), "{}").unwrap();
    let o = batch(&base, &table, &fitdir, &[]);
    assert_eq!(o.status.code(), Some(4));
    assert!(String::from_utf8_lossy(&o.stderr).contains("not a batch's"));
}
