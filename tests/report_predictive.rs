//! The report's prior-predictive pictures beyond the survival bands (those are
//! tested in tests/export.rs): the regression templates' intervals of the
//! response at each profile and of the R²-type quantities, and each expert's
//! curve beside a pooled belief.

mod common;
use common::*;
use std::path::{Path, PathBuf};

/// `priorsmith new TEMPLATE` in `dir`, with `extra` appended; returns the file.
fn starter(dir: &Path, template: &str, extra: &str) -> PathBuf {
    let spec = dir.join(format!("{template}.toml"));
    let o = run(&["new", template, "--out", spec.to_str().unwrap()]);
    assert!(o.status.success(), "{}", stderr(&o));
    let mut text = std::fs::read_to_string(&spec).unwrap();
    text.push_str(extra);
    std::fs::write(&spec, text).unwrap();
    spec
}

fn fit(spec: &Path, out: &Path) {
    let o = run(&[
        "fit",
        spec.to_str().unwrap(),
        "--draws",
        "2000",
        "-q",
        "-o",
        out.to_str().unwrap(),
    ]);
    assert!(o.status.success(), "{}", stderr(&o));
}

/// The picture's median of one interval against the implied median of the
/// fit's fresh draws (fit.json: an independent draw set of the same prior).
/// SE of a sample median: sd·√(π/(2n)) with sd ≈ IQR/1.349 (normal
/// approximation, common practice); the difference of two independent medians
/// has the two variances added; tolerance 4 SE (as the survival bands' test).
fn agrees(
    what: &str,
    iv: &priorsmith::report::regression::Interval,
    r: &priorsmith::fit::BeliefReport,
    n_fit: f64,
) {
    let k = r
        .probs
        .iter()
        .position(|p| (p - 0.5).abs() < 1e-12)
        .expect("the record has the implied median");
    let implied = r.implied_quantiles[k];
    let sd = (iv.q[4] - iv.q[2]) / 1.349;
    let n_pic = priorsmith::report::predictive::CURVE_DRAWS as f64;
    let se = sd * (std::f64::consts::PI / 2.0 * (1.0 / n_fit + 1.0 / n_pic)).sqrt();
    assert!(se > 0.0, "{what}: a degenerate interval");
    let diff = (iv.q[3] - implied).abs();
    assert!(
        diff <= 4.0 * se,
        "{what}: picture median {} vs fit.json {implied} (4 SE = {})",
        iv.q[3],
        4.0 * se
    );
    // The intervals are nested around the median.
    for j in 1..iv.q.len() {
        assert!(
            iv.q[j - 1] <= iv.q[j],
            "{what}: intervals cross: {:?}",
            iv.q
        );
    }
}

/// Logistic starter with a second profile: the event probability at the
/// reference profile agrees with fit.json's implied event probability (belief
/// 1), the named profile is drawn too, and the report holds both plots and
/// renders them the same twice.
#[test]
fn regression_picture_agrees_with_the_recorded_event_probability() {
    let d = tempfile::tempdir().unwrap();
    let spec = starter(d.path(), "logistic", "\n[profile.high_x1]\nx1 = 2.0\n");
    let out = d.path().join("out");
    fit(&spec, &out);
    let rec = priorsmith::export::record::read(&out.join("fit.json")).unwrap();
    let pic = priorsmith::report::regression::regression_picture(&out, &rec)
        .unwrap()
        .expect("a logistic folder with spec.toml has a picture");
    assert_eq!(pic.response, "event_prob");
    let names: Vec<&str> = pic.profiles.iter().map(|p| p.profile.as_str()).collect();
    assert_eq!(names, ["reference", "high_x1"]);
    let r = &rec.fit.beliefs[0];
    assert_eq!(r.quantity, "event_prob");
    let iv = &pic.profiles[0];
    assert_eq!(
        iv.belief.map(|b| b.0),
        Some(1),
        "belief 1 drawn at the reference"
    );
    assert!(pic.profiles[1].belief.is_none());
    agrees("event_prob at the reference", iv, r, rec.fit.draws as f64);
    // Logistic has the Bayesian and the latent-scale R², no belief on either.
    let shares: Vec<&str> = pic.shares.iter().map(|s| s.quantity.as_str()).collect();
    assert_eq!(shares, ["r2", "r2_latent"]);
    assert!(pic.shares.iter().all(|s| s.belief.is_none()));
    assert!(pic
        .shares
        .iter()
        .all(|s| s.q.iter().all(|v| (0.0..=1.0).contains(v))));
    let html = std::fs::read_to_string(out.join("report.html")).unwrap();
    for id in ["response", "variance-explained"] {
        assert!(html.contains(&format!("id=\"{id}\"")), "{id} missing");
        assert!(out.join("plots").join(format!("{id}.svg")).is_file());
    }
    assert!(html.contains("high_x1"));
    // 40 of the 300 design rows, sorted by implied median, intervals nested.
    assert_eq!(pic.design_rows, 300);
    assert_eq!(pic.rows.len(), 40);
    for w in pic.rows.windows(2) {
        assert!(w[0].q[3] <= w[1].q[3], "rows not sorted by median");
    }
    for r in &pic.rows {
        assert!(r.q.windows(2).all(|w| w[0] <= w[1]), "{:?}", r.q);
    }
    assert!(out.join("plots/design-rows.svg").is_file());
    let svg1 = std::fs::read(out.join("plots/response.svg")).unwrap();
    let o = run(&["report", out.to_str().unwrap()]);
    assert!(o.status.success(), "{}", stderr(&o));
    assert_eq!(svg1, std::fs::read(out.join("plots/response.svg")).unwrap());
    // Without spec.toml: no picture, and a sentence saying why.
    std::fs::remove_file(out.join("spec.toml")).unwrap();
    let o = run(&["report", out.to_str().unwrap()]);
    assert!(o.status.success(), "{}", stderr(&o));
    let html = std::fs::read_to_string(out.join("report.html")).unwrap();
    assert!(html.contains("No prior-predictive picture of the model"));
    assert!(!html.contains("id=\"response\""));
}

/// Linear starter (an R² belief): the picture's R² agrees with fit.json's
/// implied R², and the belief is drawn on it.
#[test]
fn regression_picture_agrees_with_the_recorded_r2() {
    let d = tempfile::tempdir().unwrap();
    let spec = starter(d.path(), "linear", "");
    let out = d.path().join("out");
    fit(&spec, &out);
    let rec = priorsmith::export::record::read(&out.join("fit.json")).unwrap();
    let pic = priorsmith::report::regression::regression_picture(&out, &rec)
        .unwrap()
        .expect("a linear folder with spec.toml has a picture");
    assert_eq!(pic.response, "mean_response");
    let r2 = pic.shares.iter().find(|s| s.quantity == "r2").unwrap();
    assert_eq!(r2.belief.map(|b| b.0), Some(1));
    let r = &rec.fit.beliefs[0];
    assert_eq!(r.quantity, "r2");
    agrees("R²", r2, r, rec.fit.draws as f64);
}

/// The mixture-cure starter with its cure-fraction belief stated by two experts.
fn pooled_spec(dir: &Path, weights: (&str, &str)) -> PathBuf {
    let spec = dir.join("mixture-cure.toml");
    let o = run(&["new", "mixture-cure", "--out", spec.to_str().unwrap()]);
    assert!(o.status.success(), "{}", stderr(&o));
    let text = std::fs::read_to_string(&spec).unwrap();
    let single = "quantity = \"cure_fraction\"\nquantiles = { \"0.1\" = 0.15, \"0.5\" = 0.25, \"0.9\" = 0.40 }";
    assert!(
        text.contains(single),
        "the starter's cure-fraction belief changed"
    );
    let pooled = format!(
        "quantity = \"cure_fraction\"\nexperts = [\n  {{ name = \"Ana\", weight = {}, quantiles = {{ \"0.1\" = 0.12, \"0.5\" = 0.2, \"0.9\" = 0.32 }} }},\n  {{ name = \"Ben\", weight = {}, distribution = {{ family = \"beta\", alpha = 6, beta = 14 }} }},\n]",
        weights.0, weights.1
    );
    std::fs::write(&spec, text.replace(single, &pooled)).unwrap();
    spec
}

/// Linear interpolation of a tabulated CDF (flat outside the table).
fn interp(x: &[f64], f: &[f64], at: f64) -> f64 {
    let k = x.partition_point(|v| *v <= at);
    if k == 0 {
        return 0.0;
    }
    if k == x.len() {
        return f[f.len() - 1];
    }
    let t = (at - x[k - 1]) / (x[k] - x[k - 1]);
    f[k - 1] + t * (f[k] - f[k - 1])
}

/// A pooled belief: each expert's CDF is drawn beside the pool, labelled by name
/// and weight in the pool; the stated weights 2 and 1 are said to be normalised;
/// the pool recorded in fit.json is the weighted sum of the experts' curves the
/// report draws (the linear opinion pool F = Σ w_e F_e, Stone 1961).
#[test]
fn pooled_belief_draws_each_expert() {
    let d = tempfile::tempdir().unwrap();
    let spec = pooled_spec(d.path(), ("2", "1"));
    let out = d.path().join("out");
    fit(&spec, &out);
    let html = std::fs::read_to_string(out.join("report.html")).unwrap();
    assert!(
        html.contains(
            "Ana (weight 2 → 0.667), Ben (weight 1 → 0.333); weights normalised to sum to 1"
        ),
        "expert line missing"
    );
    let svg = std::fs::read_to_string(out.join("plots/belief-1-cdf.svg")).unwrap();
    for label in ["Ana (weight 0.667)", "Ben (weight 0.333)"] {
        assert!(
            svg.contains(&format!("<title>{label}</title>")),
            "{label} curve"
        );
        assert!(svg.contains(&format!(">{label}</text>")), "{label} label");
    }
    // Beliefs without experts draw none.
    let svg2 = std::fs::read_to_string(out.join("plots/belief-2-cdf.svg")).unwrap();
    assert!(!svg2.contains("each expert"));
    // The record's pool against Σ share_e F_e of the drawn expert curves.
    let rec = priorsmith::export::record::read(&out.join("fit.json")).unwrap();
    assert!(rec.fit.beliefs[0]
        .stated_as
        .ends_with("weights normalised to sum to 1"));
    let mut bs = priorsmith::report::beliefs(&rec.file, &rec.fit, &out.join("draws.csv")).unwrap();
    assert!(priorsmith::report::experts::attach(&out, &mut bs).unwrap());
    let ex = &bs[0].experts;
    assert_eq!(ex.len(), 2);
    assert!((ex[0].share - 2.0 / 3.0).abs() < 1e-12);
    let pool = &rec.fit.beliefs[0].believed_curve;
    let mut worst: f64 = 0.0;
    for (x, f) in pool.x.iter().zip(&pool.cdf) {
        let mix: f64 = ex
            .iter()
            .map(|e| e.share * interp(&e.curve.x, &e.curve.cdf, *x))
            .sum();
        worst = worst.max((mix - f).abs());
    }
    // Tolerance: linear interpolation between 200 tabulated points of a smooth
    // CDF (the tables are not on the same x), common practice.
    assert!(worst < 5e-3, "pool vs weighted experts: max |ΔF| = {worst}");
    assert!(bs[1].experts.is_empty());
}

/// Weights that already sum to 1 are not said to be normalised.
#[test]
fn pooled_belief_with_unit_weights_says_nothing_about_normalising() {
    let d = tempfile::tempdir().unwrap();
    let spec = pooled_spec(d.path(), ("0.5", "0.5"));
    let out = d.path().join("out");
    fit(&spec, &out);
    let html = std::fs::read_to_string(out.join("report.html")).unwrap();
    assert!(
        html.contains("Ana (weight 0.5), Ben (weight 0.5)."),
        "expert line"
    );
    assert!(!html.contains("normalised to sum to 1"));
}

/// Headless Chromium renders every plot of a report folder (the page's check
/// script counts plots and rendered boxes); `None` where chromium is missing.
fn chromium_renders(out: &Path) -> Option<()> {
    use std::process::Command;
    let chrome = ["chromium", "chromium-browser", "google-chrome"]
        .iter()
        .find(|c| {
            Command::new(c)
                .arg("--version")
                .output()
                .is_ok_and(|o| o.status.success())
        })?;
    let profile = tempfile::tempdir().unwrap();
    let url = format!("file://{}", out.join("report.html").display());
    let o = Command::new(chrome)
        .args([
            "--headless",
            "--no-sandbox",
            "--disable-gpu",
            "--disable-quic",
            "--no-first-run",
            "--disable-background-networking",
            "--disable-component-update",
            "--disable-sync",
            &format!("--user-data-dir={}", profile.path().display()),
            "--window-size=1200,3000",
            "--dump-dom",
            &url,
        ])
        .output()
        .unwrap();
    assert!(o.status.success(), "chromium failed: {}", stderr(&o));
    let dom = String::from_utf8_lossy(&o.stdout);
    let attr = |name: &str| -> Option<String> {
        let k = format!("{name}=\"");
        let i = dom.find(&k)? + k.len();
        Some(dom[i..].split('"').next()?.to_string())
    };
    assert_eq!(attr("data-errors"), None, "script errors in the report");
    let plots = attr("data-plots").expect("the check script ran");
    let files = std::fs::read_dir(out.join("plots"))
        .unwrap()
        .flatten()
        .filter(|e| e.path().extension().is_some_and(|x| x == "svg"))
        .count();
    assert_eq!(plots, files.to_string());
    assert_eq!(
        attr("data-plots-rendered").as_deref(),
        Some(plots.as_str()),
        "some plots did not render"
    );
    Some(())
}

/// The new plots (regression picture, experts' curves) render in headless
/// Chromium with every other plot. Skips (with a message) without chromium.
#[test]
fn new_plots_render_in_headless_chromium() {
    let d = tempfile::tempdir().unwrap();
    let spec = starter(d.path(), "logistic-multilevel", "");
    let reg = d.path().join("reg");
    fit(&spec, &reg);
    assert!(reg.join("plots/response.svg").is_file());
    assert!(reg.join("plots/variance-explained.svg").is_file());
    let pooled = d.path().join("pooled");
    std::fs::create_dir(&pooled).unwrap();
    let spec = pooled_spec(&pooled, ("2", "1"));
    let pool = d.path().join("pool");
    fit(&spec, &pool);
    for out in [&reg, &pool] {
        if chromium_renders(out).is_none() {
            eprintln!("SKIP new_plots_render_in_headless_chromium: chromium not found (apt-get install -y chromium)");
            return;
        }
    }
}

/// The design rows are spelled out as their raw covariate values (the design is
/// stored centred and standardised): a CSV row equal to the column means gives
/// exactly the reference profile's interval (same base draws, η − α = 0).
#[test]
fn a_design_row_at_the_means_is_the_reference_profile() {
    let d = tempfile::tempdir().unwrap();
    // Column means (3, 1); row 3 is (3, 1).
    write(d.path(), "x.csv", "a,b\n1,2\n2,0\n3,1\n4,5\n5,-3\n");
    let spec = write(
        d.path(),
        "lin.toml",
        "title = \"design rows (invented)\"\n[model]\ntemplate = \"linear\"\n[design]\nfile = \"x.csv\"\nstandardise = true\n[simulation]\ndraws = 2000\nseed = 4\n[prior.intercept]\nfamily = \"normal\"\nmean = 0.0\nsd = 1.0\n[prior.sigma]\nfamily = \"half-normal\"\nscale = 1.0\n[prior.coefficients]\nfamily = \"normal\"\nscale = { fit = [0.01, 3.0] }\n[[belief]]\nquantity = \"r2\"\nquantiles = { \"0.1\" = 0.1, \"0.5\" = 0.3, \"0.9\" = 0.5 }\n",
    );
    let out = d.path().join("out");
    fit(&spec, &out);
    let rec = priorsmith::export::record::read(&out.join("fit.json")).unwrap();
    let pic = priorsmith::report::regression::regression_picture(&out, &rec)
        .unwrap()
        .unwrap();
    assert_eq!(pic.rows.len(), 5, "all five rows");
    let row3 = pic.rows.iter().find(|r| r.profile == "row 3").unwrap();
    let reference = &pic.profiles[0];
    for (a, b) in row3.q.iter().zip(&reference.q) {
        assert!(
            (a - b).abs() <= 1e-9 * b.abs().max(1.0),
            "row 3 {a} vs reference {b}"
        );
    }
    // Another row differs (its covariates are not at the means).
    let row1 = pic.rows.iter().find(|r| r.profile == "row 1").unwrap();
    assert!((row1.q[6] - reference.q[6]).abs() > 1e-3);
}
