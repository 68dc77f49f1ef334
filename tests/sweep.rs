//! Integration tests of `priorsmith sweep`: the real binary on temporary files.

mod common;

use std::path::Path;

/// An invented two-belief cure model, small draws so the test is quick.
const SPEC: &str = r#"
title = "sweep test (invented)"
[model]
template = "mixture-cure"
latency = "exponential"
[simulation]
draws = 3000
seed = 5
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
quantiles = { "0.1" = 0.15, "0.5" = 0.25, "0.9" = 0.40 }
[[belief]]
quantity = "survival_prob"
horizon = 36
distribution = { family = "beta", alpha = 12, beta = 18 }
"#;

fn hypers(p: &Path) -> serde_json::Map<String, serde_json::Value> {
    let v: serde_json::Value = serde_json::from_str(&std::fs::read_to_string(p).unwrap()).unwrap();
    v["hyperparameters"].as_object().unwrap().clone()
}

#[test]
fn wider_cure_belief_widens_cure_sd_and_width_one_is_fit() {
    let d = tempfile::tempdir().unwrap();
    let spec = d.path().join("spec.toml");
    std::fs::write(&spec, SPEC).unwrap();
    let out = d.path().join("sweep");
    // Widen only the cure-fraction belief (belief 1).
    let st = common::bin()
        .args(["-q", "sweep"])
        .arg(&spec)
        .args(["--widths", "2,0.5,1,0.75,1.5", "--beliefs", "1", "--out"])
        .arg(&out)
        .status()
        .unwrap();
    assert!(st.success());
    let mut rdr = csv::Reader::from_path(out.join("sweep.csv")).unwrap();
    let head = rdr.headers().unwrap().clone();
    let col = |name: &str| head.iter().position(|h| h == name).unwrap();
    let (cw, csd) = (col("width"), col("cure_logit.sd"));
    let rows: Vec<(f64, f64)> = rdr
        .records()
        .map(|r| {
            let r = r.unwrap();
            (r[cw].parse().unwrap(), r[csd].parse().unwrap())
        })
        .collect();
    let widths: Vec<f64> = rows.iter().map(|r| r.0).collect();
    assert_eq!(widths, vec![0.5, 0.75, 1.0, 1.5, 2.0], "sorted widths");
    for w in rows.windows(2) {
        assert!(
            w[1].1 > w[0].1,
            "cure_logit.sd not increasing with width: {rows:?}"
        );
    }
    // A logit-scale widening by w multiplies the belief's logit spread by w, so
    // the fitted sd roughly doubles from width 1 to 2 (loose: the survival belief
    // also constrains the cure fraction).
    assert!(rows[4].1 / rows[2].1 > 1.4, "{rows:?}");
    assert!(rows[0].1 / rows[2].1 < 0.75, "{rows:?}");

    // Width 1 reproduces `fit` bit for bit.
    let fit_out = d.path().join("fit");
    let st = common::bin()
        .args(["-q", "fit"])
        .arg(&spec)
        .arg("--out")
        .arg(&fit_out)
        .status()
        .unwrap();
    assert!(st.success());
    let a = hypers(&fit_out.join("fit.json"));
    let b = hypers(&out.join("width-1").join("fit.json"));
    assert_eq!(a.len(), b.len());
    for (k, v) in &a {
        assert_eq!(
            v.as_f64().unwrap().to_bits(),
            b[k].as_f64().unwrap().to_bits(),
            "{k}"
        );
    }
    let svg = std::fs::read_to_string(out.join("sweep.svg")).unwrap();
    assert!(svg.contains("<svg") && svg.contains("cure_logit.sd"));
    // Titled by the beliefs as stated, with every width named and labelled on
    // the axis; believed blue and implied vermillion, as in the report.
    assert!(!svg.contains("widened ×"), "title of one width");
    assert!(
        svg.contains("widths 0.5, 0.75, 1, 1.5, 2"),
        "widths not named"
    );
    for w in ["0.5", "0.75", "1.5"] {
        assert!(
            svg.contains(&format!("text-anchor=\"middle\">{w}</text>")),
            "width {w} not labelled"
        );
    }
    assert!(svg.contains("believed (median)") && svg.contains("#0072B2"));
    assert!(svg.contains("belief 1: cure fraction"), "readable label");
}

#[test]
fn bad_widths_are_rejected() {
    let d = tempfile::tempdir().unwrap();
    let spec = d.path().join("spec.toml");
    std::fs::write(&spec, SPEC).unwrap();
    for (w, msg) in [
        ("0,1", "must be a finite number > 0"),
        ("1,x", "`x` is not a number"),
        ("1,1", "given twice"),
    ] {
        let o = common::bin()
            .arg("sweep")
            .arg(&spec)
            .args(["--widths", w, "--out"])
            .arg(d.path().join("o"))
            .output()
            .unwrap();
        assert_eq!(o.status.code(), Some(2), "usage error");
        let e = String::from_utf8_lossy(&o.stderr);
        assert!(e.contains(msg), "{w}: {e}");
    }
    let o = common::bin()
        .arg("sweep")
        .arg(&spec)
        .args(["--beliefs", "3", "--out"])
        .arg(d.path().join("o"))
        .output()
        .unwrap();
    assert!(!o.status.success());
    assert!(String::from_utf8_lossy(&o.stderr).contains("belief 3 does not exist"));
}
