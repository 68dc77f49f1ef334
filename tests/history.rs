//! Historical data → belief, effective sample size and the conflict check, on the
//! real binary.

mod common;
use common::*;
use std::path::PathBuf;

fn repo(p: &str) -> PathBuf {
    PathBuf::from(env!("CARGO_MANIFEST_DIR")).join(p)
}

/// alpha + beta of the Beta printed in a `[[belief]]` block.
fn block_ab(s: &str) -> (f64, f64) {
    let num = |k: &str| -> f64 {
        let i = s.find(&format!("{k} = ")).unwrap() + k.len() + 3;
        s[i..].split([',', ' ']).next().unwrap().parse().unwrap()
    };
    (num("alpha"), num("beta"))
}

#[test]
fn six_mp_table_and_discounted_plateau() {
    let data = repo("tests/data/freireich_leukaemia.csv");
    let d = data.to_str().unwrap();
    let r = run(&[
        "history",
        d,
        "--arm",
        "6-MP",
        "--summary",
        "plateau",
        "--discount",
        "1",
        "--table",
    ]);
    let out = stdout(&r);
    assert!(r.status.success(), "{}", stderr(&r));
    // Kaplan–Meier and Greenwood se of the 6-MP arm (Freireich et al. 1963):
    // lifelines 0.30.3, tests/data/six_mp_km.csv.
    let reference: Vec<Vec<f64>> = std::fs::read_to_string(repo("tests/data/six_mp_km.csv"))
        .unwrap()
        .lines()
        .filter(|l| !l.starts_with('#') && !l.starts_with("time"))
        .map(|l| l.split(',').map(|x| x.parse().unwrap()).collect())
        .collect();
    let rows: Vec<Vec<f64>> = out
        .lines()
        .filter(|l| l.starts_with('#'))
        .filter_map(|l| {
            let v: Vec<f64> = l[1..]
                .split_whitespace()
                .filter_map(|x| x.parse().ok())
                .collect();
            (v.len() == 5).then_some(v)
        })
        .collect();
    assert_eq!(rows.len(), reference.len(), "{out}");
    for (a, b) in rows.iter().zip(&reference) {
        assert_eq!(a[0], b[0]);
        assert!(
            (a[3] - b[1]).abs() < 1e-6 && (a[4] - b[2]).abs() < 1e-6,
            "{a:?} vs {b:?}"
        );
    }
    // Plateau 0.4482 with se 0.1346: n_h = p(1 − p)/se², all kept at discount 1.
    let (p, se) = (reference[6][1], reference[6][2]);
    let n_h = p * (1.0 - p) / (se * se);
    let (a1, b1) = block_ab(&out);
    assert!((a1 + b1 - n_h).abs() < 1e-4, "{a1} + {b1} vs {n_h}");
    assert!((a1 / (a1 + b1) - p).abs() < 1e-6);
    assert!(out.contains("quantity = \"cure_fraction\""));
    // A 50 % discount halves the effective sample size.
    let r = run(&[
        "history",
        d,
        "--arm",
        "6-MP",
        "--summary",
        "plateau",
        "--discount",
        "0.5",
    ]);
    let (a2, b2) = block_ab(&stdout(&r));
    assert!(((a2 + b2) / (a1 + b1) - 0.5).abs() < 1e-6);
}

#[test]
fn bad_history_input_names_file_line_and_value() {
    let d = tempfile::tempdir().unwrap();
    let f = write(
        d.path(),
        "old.csv",
        "# invented\ntime,event\n3,1\n4,maybe\n",
    );
    let r = run(&[
        "history",
        f.to_str().unwrap(),
        "--summary",
        "plateau",
        "--discount",
        "0.5",
    ]);
    let err = stderr(&r);
    assert_eq!(r.status.code(), Some(3), "{err}");
    assert!(err.contains("old.csv:4") && err.contains("maybe"), "{err}");
    let r = run(&["history", f.to_str().unwrap(), "--discount", "1.5"]);
    assert_ne!(r.status.code(), Some(0));
    assert!(!stderr(&r).contains("panicked"));
    // Unknown arm lists the arms present.
    let data = repo("tests/data/freireich_leukaemia.csv");
    let r = run(&[
        "history",
        data.to_str().unwrap(),
        "--arm",
        "6MP",
        "--summary",
        "median",
        "--discount",
        "1",
    ]);
    assert_eq!(r.status.code(), Some(3));
    assert!(stderr(&r).contains("placebo"), "{}", stderr(&r));
    // A column named twice used to be read from its first copy.
    let f = write(
        d.path(),
        "twice.csv",
        "# invented\ntime,event,Time\n3,1,4\n",
    );
    let r = run(&[
        "history",
        f.to_str().unwrap(),
        "--summary",
        "plateau",
        "--discount",
        "0.5",
    ]);
    let err = stderr(&r);
    assert_eq!(r.status.code(), Some(3), "{err}");
    assert!(
        err.contains("twice.csv:2") && err.contains("`Time` appears twice"),
        "{err}"
    );
}

fn demo_spec(dir: &std::path::Path, draws: &str) -> PathBuf {
    for f in ["historical.csv", "cure-from-history.toml"] {
        std::fs::copy(repo(&format!("demo-data/history/{f}")), dir.join(f)).unwrap();
    }
    let p = dir.join("cure-from-history.toml");
    let t = std::fs::read_to_string(&p)
        .unwrap()
        .replace("draws = 20000", &format!("draws = {draws}"));
    std::fs::write(&p, t).unwrap();
    p
}

#[test]
fn historical_key_fit_reports_ess_and_conflict_flags() {
    let d = tempfile::tempdir().unwrap();
    let spec = demo_spec(d.path(), "4000");
    let out = d.path().join("out");
    let r = run(&[
        "fit",
        spec.to_str().unwrap(),
        "--out",
        out.to_str().unwrap(),
        "-q",
    ]);
    assert!(r.status.success(), "{}", stderr(&r));
    let j = json(&out.join("fit.json"));
    // The stated belief's ESS equals what `history` prints for the same data.
    let data = d.path().join("historical.csv");
    let r = run(&[
        "history",
        data.to_str().unwrap(),
        "--arm",
        "control",
        "--summary",
        "survival_prob",
        "--horizon",
        "12",
        "--discount",
        "0.5",
    ]);
    let (a, b) = block_ab(&stdout(&r));
    let be = j["beliefs"][1]["believed_ess"].as_f64().unwrap();
    assert!((be - (a + b)).abs() < 1e-4, "{be} vs {}", a + b);
    assert!(j["beliefs"][1]["ess"].as_f64().unwrap() > 0.0);
    assert!(j["beliefs"][2]["ess"].is_null(), "median has no ESS");
    assert!(std::fs::read_to_string(out.join("summary.txt"))
        .unwrap()
        .contains("Prior effective sample size"));
    assert!(std::fs::read_to_string(out.join("report.html"))
        .unwrap()
        .contains(">ESS believed</th>"));
    // Conflict: data like the historical control pass, others are flagged.
    let s = spec.to_str().unwrap();
    let o = out.to_str().unwrap();
    let like = repo("demo-data/history/new-trial.csv");
    let unlike = repo("demo-data/history/new-trial-conflict.csv");
    let r = run(&[
        "conflict",
        o,
        "--spec",
        s,
        "--data",
        like.to_str().unwrap(),
        "--horizon",
        "24",
        "--json",
    ]);
    assert!(r.status.success(), "{}", stderr(&r));
    let c: serde_json::Value = serde_json::from_str(&stdout(&r)).unwrap();
    assert_eq!(c["flagged"], false, "{c}");
    let r = run(&[
        "conflict",
        o,
        "--spec",
        s,
        "--data",
        unlike.to_str().unwrap(),
        "--horizon",
        "24",
    ]);
    assert!(r.status.success(), "{}", stderr(&r));
    assert!(stdout(&r).contains("CONFLICT"), "{}", stdout(&r));
    // A belief file that was not fitted into `out` is refused.
    let other = write(
        d.path(),
        "other.toml",
        &std::fs::read_to_string(&spec)
            .unwrap()
            .replace("seed = 7", "seed = 8"),
    );
    let r = run(&[
        "conflict",
        o,
        "--spec",
        other.to_str().unwrap(),
        "--data",
        like.to_str().unwrap(),
        "--horizon",
        "24",
    ]);
    assert_ne!(r.status.code(), Some(0));
    assert!(stderr(&r).contains("digest"), "{}", stderr(&r));
}

#[test]
fn historical_key_errors_name_the_key() {
    let d = tempfile::tempdir().unwrap();
    let spec = demo_spec(d.path(), "2000");
    let t = std::fs::read_to_string(&spec).unwrap();
    let bad = write(
        d.path(),
        "bad.toml",
        &t.replacen("summary = \"plateau\"", "summary = \"plateua\"", 1),
    );
    let r = run(&["check", bad.to_str().unwrap()]);
    let err = stderr(&r);
    assert_eq!(r.status.code(), Some(3), "{err}");
    assert!(
        err.contains("bad.toml") && err.contains("summary") && err.contains("plateau"),
        "{err}"
    );
    let bad = write(
        d.path(),
        "bad2.toml",
        &t.replacen(", discount = 0.5, extra_sd = 0.03", "", 1),
    );
    let r = run(&["check", bad.to_str().unwrap()]);
    assert_eq!(r.status.code(), Some(3));
    assert!(stderr(&r).contains("discount"), "{}", stderr(&r));
    let bad = write(
        d.path(),
        "bad3.toml",
        &t.replacen("data = \"historical.csv\"", "data = \"missing.csv\"", 1),
    );
    let r = run(&["check", bad.to_str().unwrap()]);
    assert_ne!(r.status.code(), Some(0));
    assert!(stderr(&r).contains("missing.csv"), "{}", stderr(&r));
}

/// `fit` writes the belief file it fitted as OUT/spec.toml with its data path
/// rewritten to resolve from OUT: refitting that copy gives the same record
/// (hyperparameters and spec digest), and `conflict OUT` finds it by default.
/// A batch row's models/<id>/spec.toml, from a base file with a relative data
/// path, reproduces the row the same way.
#[test]
fn fit_and_batch_write_a_spec_toml_that_refits() {
    let d = tempfile::tempdir().unwrap();
    let data_dir = d.path().join("inputs");
    std::fs::create_dir(&data_dir).unwrap();
    let spec = demo_spec(&data_dir, "4000");
    let out = d.path().join("results").join("fit");
    let o = run(&[
        "fit",
        spec.to_str().unwrap(),
        "--out",
        out.to_str().unwrap(),
        "-q",
    ]);
    assert!(o.status.success(), "{}", stderr(&o));
    let copy = std::fs::read_to_string(out.join("spec.toml")).unwrap();
    assert!(
        copy.contains("data = \"../../inputs/historical.csv\""),
        "{copy}"
    );
    let again = d.path().join("again");
    let o = run(&[
        "fit",
        out.join("spec.toml").to_str().unwrap(),
        "--out",
        again.to_str().unwrap(),
        "-q",
    ]);
    assert!(o.status.success(), "{}", stderr(&o));
    let (a, b) = (json(&out.join("fit.json")), json(&again.join("fit.json")));
    assert_eq!(a["hyperparameters"], b["hyperparameters"]);
    assert_eq!(a["spec_digest"], b["spec_digest"]);
    let o = run(&[
        "conflict",
        out.to_str().unwrap(),
        "--data",
        repo("demo-data/history/new-trial.csv").to_str().unwrap(),
        "--horizon",
        "24",
    ]);
    assert!(o.status.success(), "{}", stderr(&o));

    let table = write(d.path(), "t.csv", "id,simulation.seed\nrow-a,5\n");
    let bo = d.path().join("batch");
    let o = run(&[
        "batch",
        table.to_str().unwrap(),
        "--spec",
        spec.to_str().unwrap(),
        "--out",
        bo.to_str().unwrap(),
        "-q",
    ]);
    assert!(o.status.success(), "{}", stderr(&o));
    let row = bo.join("models").join("row-a");
    let refit = d.path().join("refit");
    let o = run(&[
        "fit",
        row.join("spec.toml").to_str().unwrap(),
        "--out",
        refit.to_str().unwrap(),
        "-q",
    ]);
    assert!(o.status.success(), "{}", stderr(&o));
    let (a, b) = (json(&row.join("fit.json")), json(&refit.join("fit.json")));
    assert_eq!(a["hyperparameters"], b["hyperparameters"]);
    assert_eq!(a["spec_digest"], b["spec_digest"]);
}
