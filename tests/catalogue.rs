//! The catalogue of bad-input and fault classes: one row per class, each run on
//! the real binary with temporary files. Every row checks the exit code (the
//! README's exit-code table), that the message names what it must (file, key
//! or line, bad value), that nothing panicked, and that an output folder given
//! to the command is left exactly as it was (or not created).
//!
//! Kinds: `Hang` (work that used to run without bound: it must end, refused or
//! bounded), `Panic` (input that could crash a reader), `Silent` (wrong input
//! that used to be accepted), `Unclear` (an error that used to be vague),
//! `Folder` (faults around output folders). Rows marked `elsewhere` are covered
//! by a test in another file (named in the row) and are listed here so that
//! the counts by kind are complete; the catalogue test prints the counts.
//!
//! Property tests at the end: arbitrary bytes and mutated valid files given to
//! the design-CSV, batch-table and fit.json readers never panic, and either
//! parse or give an error that names the file.

mod common;
use common::*;
use std::collections::BTreeMap;
use std::path::{Path, PathBuf};

#[derive(Debug, Clone, Copy, PartialEq, Eq, PartialOrd, Ord)]
enum Kind {
    Hang,
    Panic,
    Silent,
    Unclear,
    Folder,
}
use Kind::*;

/// What a row runs.
enum Run {
    /// `check` and `fit --out` on a belief file (the mixture-cure starter at 512
    /// draws with the replacements applied, or the text as given).
    Spec(String),
    /// A command on files written first: (name, bytes) pairs; `{d}` in the
    /// arguments is the temporary folder.
    Cmd(Vec<(String, Vec<u8>)>, Vec<String>),
    /// A command on a copy of a fitted folder `{d}/fit` whose fit.json is changed
    /// by the closure (and draws.csv by the second).
    Fitted(fn(&mut serde_json::Value), fn(&str) -> String, Vec<String>),
    /// Covered by the named test in another file.
    Elsewhere(&'static str),
}

struct Row {
    kind: Kind,
    name: &'static str,
    run: Run,
    code: i32,
    needles: Vec<&'static str>,
}

fn base() -> String {
    EXAMPLE.replace("draws = 20000", "draws = 512")
}

/// The starter with `from` replaced by `to` (which must occur).
fn mc(pairs: &[(&str, &str)]) -> String {
    let mut t = base();
    for (f, to) in pairs {
        assert!(t.contains(f), "{f:?} not in the starter");
        t = t.replacen(f, to, 1);
    }
    t
}

const Q1: &str = "quantiles = { \"0.1\" = 0.15, \"0.5\" = 0.25, \"0.9\" = 0.40 }";
const BETA2: &str = "distribution = { family = \"beta\", alpha = 12, beta = 18 }";

/// A regression belief file on a CSV design `x.csv` (written by the row).
fn reg(extra: &str) -> String {
    format!(
        "title = \"t\"\n[model]\ntemplate = \"linear\"\n[design]\nfile = \"x.csv\"\n{extra}\n\
         [simulation]\ndraws = 512\nseed = 1\n[prior.intercept]\nfamily = \"normal\"\nmean = 0.0\n\
         sd = 1.0\n[prior.sigma]\nfamily = \"half-normal\"\nscale = 1.0\n[prior.coefficients]\n\
         family = \"r2d2\"\na = {{ fit = [0.2, 30.0] }}\nb = 2.0\nconcentration = 0.5\n[[belief]]\n\
         quantity = \"r2\"\nquantiles = {{ \"0.1\" = 0.08, \"0.5\" = 0.2, \"0.9\" = 0.35 }}\n"
    )
}

fn good_csv() -> String {
    let mut s = String::from("a,b,c\n");
    for i in 0..20 {
        s += &format!("{},{},{}\n", i % 7, (i * 3) % 5, (i * i) % 11);
    }
    s
}

fn files(list: &[(&str, &[u8])]) -> Vec<(String, Vec<u8>)> {
    list.iter()
        .map(|(n, b)| (n.to_string(), b.to_vec()))
        .collect()
}

fn args(a: &[&str]) -> Vec<String> {
    a.iter().map(|s| s.to_string()).collect()
}

fn spec_row(
    kind: Kind,
    name: &'static str,
    text: String,
    code: i32,
    needles: &[&'static str],
) -> Row {
    Row {
        kind,
        name,
        run: Run::Spec(text),
        code,
        needles: needles.to_vec(),
    }
}

fn cmd_row(
    kind: Kind,
    name: &'static str,
    f: Vec<(String, Vec<u8>)>,
    a: &[&str],
    code: i32,
    needles: &[&'static str],
) -> Row {
    Row {
        kind,
        name,
        run: Run::Cmd(f, args(a)),
        code,
        needles: needles.to_vec(),
    }
}

fn fitted_row(
    kind: Kind,
    name: &'static str,
    edit: fn(&mut serde_json::Value),
    draws: fn(&str) -> String,
    a: &[&str],
    code: i32,
    needles: &[&'static str],
) -> Row {
    Row {
        kind,
        name,
        run: Run::Fitted(edit, draws, args(a)),
        code,
        needles: needles.to_vec(),
    }
}

fn elsewhere(kind: Kind, name: &'static str, test: &'static str) -> Row {
    Row {
        kind,
        name,
        run: Run::Elsewhere(test),
        code: 0,
        needles: vec![],
    }
}

fn same(s: &str) -> String {
    s.to_string()
}
fn keep(_: &mut serde_json::Value) {}

fn catalogue() -> Vec<Row> {
    let mut r = Vec::new();
    let s = |from: &str, to: &str| mc(&[(from, to)]);
    let sv = |from: &str, to: &str| mc(&[(from, to)]);

    // ---- Hangs and unbounded work -------------------------------------------
    r.push(spec_row(
        Hang,
        "beta belief alpha = 1e308",
        s(
            BETA2,
            "distribution = { family = \"beta\", alpha = 1e308, beta = 18 }",
        ),
        3,
        &["spec.toml", "alpha", "1e308"],
    ));
    r.push(spec_row(
        Hang,
        "beta belief alpha = 5e-324",
        s(
            BETA2,
            "distribution = { family = \"beta\", alpha = 5e-324, beta = 18 }",
        ),
        3,
        &["spec.toml", "alpha"],
    ));
    r.push(spec_row(
        Hang,
        "beta belief alpha = 1e8",
        s(
            BETA2,
            "distribution = { family = \"beta\", alpha = 1e8, beta = 18 }",
        ),
        3,
        &["spec.toml", "alpha", "1e8"],
    ));
    r.push(spec_row(
        Hang,
        "gamma belief shape = 1e8",
        s(
            "distribution = { family = \"lognormal\", meanlog = 3.0, sdlog = 0.4 }",
            "distribution = { family = \"gamma\", shape = 1e8, rate = 1 }",
        ),
        3,
        &["spec.toml", "shape", "1e8"],
    ));
    r.push(spec_row(
        Hang,
        "inverse-gamma belief shape = 1e300",
        s(
            "distribution = { family = \"lognormal\", meanlog = 3.0, sdlog = 0.4 }",
            "distribution = { family = \"inverse-gamma\", shape = 1e300, scale = 1 }",
        ),
        3,
        &["spec.toml", "shape"],
    ));
    r.push(spec_row(
        Hang,
        "replicates = 1000000 in [fit]",
        s("[fit]\n", "[fit]\nreplicates = 1000000\n"),
        3,
        &["spec.toml", "replicates", "1000000"],
    ));
    r.push(spec_row(
        Hang,
        "draws = 10^12",
        s("draws = 512", "draws = 1000000000000"),
        5,
        &["spec.toml", "draws"],
    ));
    r.push(spec_row(
        Hang,
        "fit range [-1e308, 1e308]",
        s(
            "mean = { fit = [-4.0, 4.0] }",
            "mean = { fit = [-1e308, 1e308] }",
        ),
        3,
        &["spec.toml", "cure_logit.mean", "1e308"],
    ));
    r.push(spec_row(
        Hang,
        "a bound beyond 1e15",
        s(
            "mean = { fit = [0.0, 5.0] }",
            "mean = { fit = [0.0, 1e16] }",
        ),
        3,
        &["spec.toml", "log_scale.mean", "1e16"],
    ));
    {
        let mut many = base();
        for _ in 0..501 {
            many += "\n[[belief]]\nquantity = \"cure_fraction\"\nquantiles = { \"0.5\" = 0.25 }\n";
        }
        r.push(spec_row(
            Hang,
            "501 beliefs in one file",
            many,
            3,
            &["spec.toml", "at most 500"],
        ));
    }
    {
        let experts: Vec<String> = (0..101)
            .map(|i| format!("{{ name = \"e{i}\", weight = 1, quantiles = {{ \"0.5\" = 0.25 }} }}"))
            .collect();
        r.push(spec_row(
            Hang,
            "101 experts in one belief",
            s(Q1, &format!("experts = [{}]", experts.join(", "))),
            3,
            &["spec.toml", "experts[101]", "at most 100"],
        ));
    }
    r.push(cmd_row(
        Hang,
        "design file is /dev/zero",
        files(&[("s.toml", reg("").replace("x.csv", "/dev/zero").as_bytes())]),
        &["check", "{d}/s.toml"],
        3,
        &["/dev/zero", "not a text CSV file"],
    ));
    r.push(cmd_row(
        Hang,
        "design file is /dev/urandom",
        files(&[(
            "s.toml",
            reg("").replace("x.csv", "/dev/urandom").as_bytes(),
        )]),
        &["check", "{d}/s.toml"],
        3,
        &["/dev/urandom", "not"],
    ));
    r.push(cmd_row(
        Hang,
        "belief file is /dev/zero",
        vec![],
        &["check", "/dev/zero"],
        5,
        &["/dev/zero", "16 MB"],
    ));
    r.push(cmd_row(
        Hang,
        "belief file of 17 MB",
        files(&[("big.toml", &vec![b'#'; 17_000_000])]),
        &["check", "{d}/big.toml"],
        5,
        &["big.toml", "16 MB"],
    ));
    r.push(cmd_row(
        Hang,
        "synthetic design beyond the cell cap",
        files(&[(
            "s.toml",
            reg("")
                .replace("file = \"x.csv\"", "columns = 100000\nrows = 1000")
                .as_bytes(),
        )]),
        &["check", "{d}/s.toml"],
        5,
        &["s.toml"],
    ));
    r.push(cmd_row(
        Hang,
        "--max-memory 1 on a wide design",
        files(&[(
            "s.toml",
            reg("")
                .replace("file = \"x.csv\"", "columns = 2000\nrows = 100")
                .as_bytes(),
        )]),
        &["check", "{d}/s.toml", "--max-memory", "1"],
        5,
        &["s.toml", "MB"],
    ));
    r.push(cmd_row(
        Hang,
        "sweep --widths 1e300",
        files(&[("s.toml", base().as_bytes())]),
        &[
            "sweep",
            "{d}/s.toml",
            "--widths",
            "1e300",
            "--out",
            "{d}/out",
        ],
        2,
        &["1e300"],
    ));
    r.push(cmd_row(
        Hang,
        "--replicates 1000000",
        files(&[("s.toml", base().as_bytes())]),
        &[
            "fit",
            "{d}/s.toml",
            "--replicates",
            "1000000",
            "--out",
            "{d}/out",
        ],
        2,
        &["--replicates", "1000000"],
    ));
    r.push(elsewhere(
        Hang,
        "--threads 10000 capped with a note",
        "tests/exit_codes.rs::command_line_arguments_and_values_are_2",
    ));
    r.push(elsewhere(
        Hang,
        "history CSV over the table cap",
        "src/limits.rs::a_file_over_the_cap_is_refused_and_an_endless_device_stops_at_it",
    ));

    // ---- Panics ---------------------------------------------------------------
    r.push(spec_row(
        Panic,
        "empty belief file",
        String::new(),
        3,
        &["spec.toml"],
    ));
    r.push(spec_row(
        Panic,
        "only [[belief]]",
        "[[belief]]\n".into(),
        3,
        &["spec.toml"],
    ));
    r.push(spec_row(
        Panic,
        "malformed TOML",
        s("[fit]", "[fit"),
        3,
        &["spec.toml"],
    ));
    r.push(spec_row(
        Panic,
        "quantile key not a probability",
        s("\"0.1\" = 0.15", "\"abc\" = 0.15"),
        3,
        &["spec.toml", "abc"],
    ));
    r.push(spec_row(
        Panic,
        "quantile probability 1.5",
        s("\"0.1\" = 0.15", "\"1.5\" = 0.15"),
        3,
        &["spec.toml", "1.5"],
    ));
    r.push(spec_row(
        Panic,
        "quantiles decreasing",
        s(
            Q1,
            "quantiles = { \"0.1\" = 0.40, \"0.5\" = 0.25, \"0.9\" = 0.15 }",
        ),
        3,
        &["spec.toml", "quantiles"],
    ));
    r.push(spec_row(
        Panic,
        "empty quantiles table",
        s(Q1, "quantiles = {}"),
        3,
        &["spec.toml", "quantiles"],
    ));
    r.push(spec_row(
        Panic,
        "histogram edges not increasing",
        s(
            Q1,
            "histogram = { edges = [0.3, 0.2, 0.1], probs = [0.5, 0.5] }",
        ),
        3,
        &["spec.toml", "edges"],
    ));
    r.push(spec_row(
        Panic,
        "histogram probs not summing to 1",
        s(
            Q1,
            "histogram = { edges = [0.1, 0.2, 0.3], probs = [0.5, 0.9] }",
        ),
        3,
        &["spec.toml", "histogram", "sum to 1.4"],
    ));
    r.push(spec_row(
        Panic,
        "histogram with no bins",
        s(Q1, "histogram = { edges = [], probs = [] }"),
        3,
        &["spec.toml", "histogram"],
    ));
    r.push(spec_row(
        Panic,
        "atom mass above 1",
        s("mass = 0.05", "mass = 1.5"),
        3,
        &["spec.toml", "mass", "1.5"],
    ));
    r.push(spec_row(
        Panic,
        "negative expert weight",
        s(
            Q1,
            "experts = [{ name = \"a\", weight = -1, quantiles = { \"0.5\" = 0.25 } }]",
        ),
        3,
        &["spec.toml", "weight", "-1"],
    ));
    r.push(spec_row(
        Panic,
        "empty experts list",
        s(Q1, "experts = []"),
        3,
        &["spec.toml", "experts"],
    ));
    r.push(spec_row(
        Panic,
        "horizon = -1",
        s("horizon = 36", "horizon = -1"),
        3,
        &["spec.toml", "horizon", "-1"],
    ));
    r.push(spec_row(
        Panic,
        "horizon = inf",
        s("horizon = 36", "horizon = inf"),
        3,
        &["spec.toml", "horizon", "inf"],
    ));
    r.push(spec_row(
        Panic,
        "fit range reversed",
        s(
            "mean = { fit = [-4.0, 4.0] }",
            "mean = { fit = [4.0, -4.0] }",
        ),
        3,
        &["spec.toml", "cure_logit.mean"],
    ));
    r.push(spec_row(
        Panic,
        "sd = 0",
        s("sdlog = 0.25", "sdlog = 0.0"),
        3,
        &["spec.toml", "sdlog", "0"],
    ));
    r.push(spec_row(
        Panic,
        "seed negative",
        s("seed = 11", "seed = -1"),
        3,
        &["spec.toml", "seed", "-1"],
    ));
    r.push(spec_row(
        Panic,
        "draws = 0",
        s("draws = 512", "draws = 0"),
        3,
        &["spec.toml", "draws", "0"],
    ));
    r.push(spec_row(
        Panic,
        "beta belief beta = nan",
        s(
            BETA2,
            "distribution = { family = \"beta\", alpha = 12, beta = nan }",
        ),
        3,
        &["spec.toml", "beta", "nan"],
    ));
    r.push(cmd_row(
        Panic,
        "design header only",
        files(&[("s.toml", reg("").as_bytes()), ("x.csv", b"a,b\n")]),
        &["check", "{d}/s.toml"],
        3,
        &["x.csv", "0 data rows"],
    ));
    r.push(cmd_row(
        Panic,
        "design empty file",
        files(&[("s.toml", reg("").as_bytes()), ("x.csv", b"")]),
        &["check", "{d}/s.toml"],
        3,
        &["x.csv"],
    ));
    r.push(cmd_row(
        Panic,
        "design ragged row",
        files(&[
            ("s.toml", reg("").as_bytes()),
            ("x.csv", b"a,b\n1,2\n3\n4,5\n"),
        ]),
        &["check", "{d}/s.toml"],
        3,
        &["x.csv", "b"],
    ));
    r.push(fitted_row(
        Panic,
        "fit.json empty",
        |v| *v = serde_json::json!(null),
        same,
        &["export", "{d}/fit", "--to", "stan"],
        3,
        &["fit.json"],
    ));
    r.push(fitted_row(
        Panic,
        "fit.json an array",
        |v| *v = serde_json::json!([]),
        same,
        &["report", "{d}/fit"],
        3,
        &["fit.json", "object"],
    ));
    r.push(fitted_row(
        Panic,
        "draws.csv empty",
        keep,
        |_| String::new(),
        &["report", "{d}/fit"],
        3,
        &["draws.csv"],
    ));
    r.push(fitted_row(
        Panic,
        "draws.csv header only",
        keep,
        |t| t.lines().next().unwrap().to_string() + "\n",
        &["report", "{d}/fit"],
        3,
        &["draws.csv", "0 draws", "512"],
    ));
    r.push(fitted_row(
        Panic,
        "draws.csv ragged row",
        keep,
        |t| t.replacen("\n5,", "\n5,1,", 1),
        &["report", "{d}/fit"],
        3,
        &["draws.csv:6"],
    ));
    r.push(fitted_row(
        Panic,
        "prior params empty",
        |v| v["prior"][0]["params"] = serde_json::json!([]),
        same,
        &["export", "{d}/fit", "--to", "pymc"],
        3,
        &["fit.json", "prior[0].params"],
    ));
    r.push(cmd_row(
        Panic,
        "batch table of binary bytes",
        files(&[
            ("s.toml", base().as_bytes()),
            ("t.csv", &[0u8, 159, 146, 150, 255, 10, 0, 1]),
        ]),
        &[
            "batch",
            "--spec",
            "{d}/s.toml",
            "{d}/t.csv",
            "--out",
            "{d}/out",
        ],
        3,
        &["t.csv"],
    ));
    r.push(elsewhere(
        Panic,
        "closed stdout pipe",
        "tests/exit_codes.rs::closed_pipe_ends_silently",
    ));

    // ---- Silent wrong ---------------------------------------------------------
    let two = include_str!("../demo-data/two-arm-cure.toml")
        .replace("seed = 2026", "seed = 2026\ndraws = 512");
    r.push(spec_row(
        Silent,
        "covariates = [\"arm\", \"arm\"]",
        two.replace("covariates = [\"arm\"]", "covariates = [\"arm\", \"arm\"]"),
        3,
        &["spec.toml", "model.covariates[2]", "arm", "twice"],
    ));
    r.push(spec_row(
        Silent,
        "covariates = [\"\"]",
        two.replace("covariates = [\"arm\"]", "covariates = [\"\"]"),
        3,
        &["spec.toml", "model.covariates[1]", "empty name"],
    ));
    r.push(spec_row(
        Silent,
        "unused profile names an unknown covariate",
        two.replace(
            "[profile.experimental]",
            "[profile.other]\nage = 50\n\n[profile.experimental]",
        ),
        3,
        &["spec.toml", "profile.other.age", "age"],
    ));
    r.push(cmd_row(
        Silent,
        "regression profile names no design column",
        files(&[
            (
                "s.toml",
                reg("[profile.odd]\nzz = 1\n")
                    .replace("[profile.odd]\nzz = 1\n\n[simulation]", "\n[simulation]")
                    .replace("[[belief]]", "[profile.odd]\nzz = 1\n\n[[belief]]")
                    .as_bytes(),
            ),
            ("x.csv", good_csv().as_bytes()),
        ]),
        &["check", "{d}/s.toml"],
        3,
        &["s.toml", "profile.odd.zz", "zz"],
    ));
    r.push(spec_row(
        Silent,
        "belief quantiles all infinite",
        sv(
            Q1,
            "quantiles = { \"0.1\" = inf, \"0.5\" = inf, \"0.9\" = inf }",
        ),
        3,
        &["spec.toml", "quantiles", "inf"],
    ));
    r.push(cmd_row(
        Silent,
        "all-zero design",
        files(&[
            ("s.toml", reg("").as_bytes()),
            ("x.csv", b"a,b\n0,0\n0,0\n0,0\n"),
        ]),
        &["check", "{d}/s.toml"],
        3,
        &["x.csv", "every column of the design is constant"],
    ));
    r.push(cmd_row(
        Silent,
        "all-constant design",
        files(&[
            ("s.toml", reg("").as_bytes()),
            ("x.csv", b"a,b\n3,1\n3,1\n3,1\n"),
        ]),
        &["check", "{d}/s.toml"],
        3,
        &["x.csv", "`a` = 3", "constant"],
    ));
    r.push(cmd_row(
        Silent,
        "design column name twice",
        files(&[
            ("s.toml", reg("").as_bytes()),
            ("x.csv", b"a,b,a\n1,2,3\n2,3,1\n3,1,2\n"),
        ]),
        &["check", "{d}/s.toml"],
        3,
        &["x.csv:1", "`a`", "twice"],
    ));
    r.push(cmd_row(
        Silent,
        "batch cell holding a line break and TOML",
        files(&[
            ("s.toml", base().as_bytes()),
            ("t.csv", b"id,simulation.seed\nr1,\"5\n[fit]\ndraws = 1\"\n"),
        ]),
        &[
            "batch",
            "--spec",
            "{d}/s.toml",
            "{d}/t.csv",
            "--out",
            "{d}/out",
        ],
        3,
        &["t.csv:2", "simulation.seed", "line break", "\"5\""],
    ));
    r.push(fitted_row(
        Silent,
        "fit.json hyperparameter \"wide\"",
        |v| v["hyperparameters"]["cure_logit.sd"] = serde_json::json!("wide"),
        same,
        &["export", "{d}/fit", "--to", "stan"],
        3,
        &["fit/fit.json", "hyperparameters.cure_logit.sd", "wide"],
    ));
    r.push(fitted_row(
        Silent,
        "fit.json hyperparameter \"nan\"",
        |v| v["hyperparameters"]["cure_logit.sd"] = serde_json::json!("nan"),
        same,
        &["report", "{d}/fit"],
        3,
        &["fit/fit.json", "hyperparameters.cure_logit.sd", "nan"],
    ));
    r.push(fitted_row(
        Silent,
        "fit.json hyperparameter negative",
        |v| v["hyperparameters"]["cure_logit.sd"] = serde_json::json!(-1.0),
        same,
        &["export", "{d}/fit", "--to", "pymc"],
        3,
        &[
            "fit/fit.json",
            "hyperparameters.cure_logit.sd",
            "-1",
            "bounds",
        ],
    ));
    r.push(fitted_row(
        Silent,
        "fit.json hyperparameter disagrees with the prior",
        |v| v["hyperparameters"]["cure_logit.mean"] = serde_json::json!(0.5),
        same,
        &["export", "{d}/fit", "--to", "brms"],
        3,
        &["fit/fit.json", "prior[0].params[0]", "0.5"],
    ));
    r.push(fitted_row(
        Silent,
        "fit.json prior sd negative",
        |v| v["prior"][1]["params"][1][1] = serde_json::json!(-2.0),
        same,
        &["export", "{d}/fit", "--to", "stan"],
        3,
        &["fit/fit.json", "prior[1]", "-2"],
    ));
    r.push(fitted_row(
        Silent,
        "fit.json another template",
        |v| v["template"] = serde_json::json!("nonesuch"),
        same,
        &["report", "{d}/fit"],
        3,
        &["fit/fit.json", "template", "nonesuch"],
    ));
    r.push(fitted_row(
        Silent,
        "fit.json future schema version",
        |v| v["schema_version"] = serde_json::json!(99),
        same,
        &["export", "{d}/fit", "--to", "json"],
        3,
        &["fit/fit.json", "schema_version", "99"],
    ));
    r.push(fitted_row(
        Silent,
        "fit.json unknown family",
        |v| v["prior"][0]["family"] = serde_json::json!("nonesuch"),
        same,
        &["export", "{d}/fit", "--to", "json"],
        3,
        &["fit/fit.json", "prior[0].family", "nonesuch"],
    ));
    r.push(fitted_row(
        Silent,
        "fit.json structured prior without code, JSON export",
        |v| v["prior"][0]["family"] = serde_json::json!("coefficients/x"),
        same,
        &["export", "{d}/fit", "--to", "json"],
        3,
        &["fit/fit.json", "cure_logit", "no code"],
    ));
    r.push(fitted_row(
        Silent,
        "fit.json draws = 0",
        |v| v["draws"] = serde_json::json!(0),
        same,
        &["report", "{d}/fit"],
        3,
        &["fit/fit.json", "draws"],
    ));
    r.push(fitted_row(
        Silent,
        "fit.json hyperparameter not in order",
        |v| v["hyperparameters"]["ghost.sd"] = serde_json::json!(1.0),
        same,
        &["export", "{d}/fit", "--to", "stan"],
        3,
        &["fit/fit.json", "ghost.sd"],
    ));
    r.push(fitted_row(
        Silent,
        "truncated draws.csv",
        keep,
        |t| t.lines().take(100).collect::<Vec<_>>().join("\n") + "\n",
        &["report", "{d}/fit"],
        3,
        &["draws.csv:101", "99 draws", "512"],
    ));
    r.push(fitted_row(
        Silent,
        "draws.csv of another fit (header)",
        keep,
        |t| t.replacen("cure_fraction", "cure_fractionX", 1),
        &["report", "{d}/fit"],
        3,
        &["draws.csv:1", "cure_fractionX"],
    ));
    r.push(fitted_row(
        Silent,
        "draws.csv with extra rows",
        keep,
        |t| format!("{t}513,0.1,0.2,3.0\n"),
        &["report", "{d}/fit"],
        3,
        &["draws.csv:514", "512"],
    ));
    r.push(fitted_row(
        Silent,
        "draws.csv with NaN",
        keep,
        |t| {
            t.replacen("\n5,", "\n5,NaN,", 1)
                .replacen("NaN,0.", "NaN,", 0)
        },
        &["report", "{d}/fit"],
        3,
        &["draws.csv:6"],
    ));
    r.push(fitted_row(
        Silent,
        "draws.csv with a text cell",
        keep,
        |t| {
            let mut l: Vec<String> = t.lines().map(str::to_string).collect();
            l[3] = "3,abc,0.5,10".into();
            l.join("\n") + "\n"
        },
        &["report", "{d}/fit"],
        3,
        &["draws.csv:4", "cure_fraction", "abc"],
    ));
    r.push(fitted_row(
        Silent,
        "draws.csv draw numbers out of order",
        keep,
        |t| t.replacen("\n3,", "\n7,", 1),
        &["report", "{d}/fit"],
        3,
        &["draws.csv:4", "draw", "7"],
    ));
    r.push(fitted_row(
        Silent,
        "conflict on an edited fit.json",
        |v| v["template"] = serde_json::json!("other"),
        same,
        &[
            "conflict",
            "{d}/fit",
            "--data",
            "{d}/fit/draws.csv",
            "--horizon",
            "12",
        ],
        3,
        &["fit/fit.json", "template", "other"],
    ));
    r.push(elsewhere(
        Silent,
        "history CSV column named twice",
        "tests/history.rs::bad_history_input_names_file_line_and_value",
    ));

    // ---- Unclear errors -------------------------------------------------------
    r.push(cmd_row(
        Unclear,
        "non-UTF-8 belief file",
        files(&[("b.toml", b"title = \"t\"\n[model]\ntemplate = \"\xff\"\n")]),
        &["check", "{d}/b.toml"],
        3,
        &["b.toml:3", "byte", "0xff"],
    ));
    r.push(cmd_row(
        Unclear,
        "binary design file",
        files(&[
            ("s.toml", reg("").as_bytes()),
            ("x.csv", &[b'a', b',', 0, 1, 2, 3, 200, 10, 7, 7]),
        ]),
        &["check", "{d}/s.toml"],
        3,
        &["x.csv", "not a text CSV file"],
    ));
    r.push(cmd_row(
        Unclear,
        "design file not UTF-8",
        files(&[
            ("s.toml", reg("").as_bytes()),
            ("x.csv", b"a,b\n1,\xff\xfe\n2,3\n"),
        ]),
        &["check", "{d}/s.toml"],
        3,
        &["x.csv:2", "not UTF-8"],
    ));
    r.push(cmd_row(
        Unclear,
        "design is a folder",
        files(&[("s.toml", reg("").replace("x.csv", ".").as_bytes())]),
        &["check", "{d}/s.toml"],
        4,
        &["folder"],
    ));
    r.push(cmd_row(
        Unclear,
        "batch type error names column and row",
        files(&[
            ("s.toml", base().as_bytes()),
            ("t.csv", b"id,simulation.seed\nr1,abc\n"),
        ]),
        &[
            "batch",
            "--spec",
            "{d}/s.toml",
            "{d}/t.csv",
            "--out",
            "{d}/bout",
            "-q",
        ],
        3,
        &["t.csv", "errors.csv"],
    ));
    r.push(cmd_row(
        Unclear,
        "dangling-symlink --out",
        files(&[("s.toml", base().as_bytes())]),
        &["fit", "{d}/s.toml", "--out", "{d}/dangling"],
        4,
        &["dangling", "leads to no folder"],
    ));
    r.push(cmd_row(
        Unclear,
        "--out is a file",
        files(&[("s.toml", base().as_bytes()), ("plain", b"x")]),
        &["fit", "{d}/s.toml", "--out", "{d}/plain"],
        4,
        &["plain", "a file, not a folder"],
    ));
    r.push(cmd_row(
        Unclear,
        "simulate --set x=nan",
        files(&[("s.toml", base().as_bytes())]),
        &["simulate", "{d}/s.toml", "--set", "cure_logit.mean=nan"],
        2,
        &["cure_logit.mean", "nan"],
    ));
    r.push(spec_row(
        Unclear,
        "misspelt template",
        s("template = \"mixture-cure\"", "template = \"mixture-cur\""),
        3,
        &["spec.toml", "mixture-cur", "mixture-cure"],
    ));
    r.push(spec_row(
        Unclear,
        "misspelt family",
        s(
            "family = \"lognormal\"\nmeanlog = { fit",
            "family = \"lognormall\"\nmeanlog = { fit",
        ),
        3,
        &["spec.toml", "lognormall"],
    ));
    r.push(spec_row(
        Unclear,
        "unknown quantity",
        s(
            "quantity = \"cure_fraction\"",
            "quantity = \"cure_fractio\"",
        ),
        3,
        &["spec.toml", "cure_fractio", "cure_fraction"],
    ));
    r.push(spec_row(
        Unclear,
        "unknown top-level key",
        s("[fit]\n", "[fitt]\n"),
        3,
        &["spec.toml", "fitt"],
    ));
    r.push(spec_row(
        Unclear,
        "missing prior table",
        s("[prior.shape]", "[prior.shapes]"),
        3,
        &["spec.toml", "shape"],
    ));
    r.push(spec_row(
        Unclear,
        "discrepancy misspelt",
        s("\"cramer-von-mises\"", "\"cramer\""),
        3,
        &["spec.toml", "cramer"],
    ));
    r.push(spec_row(
        Unclear,
        "string where a number belongs",
        s("horizon = 36", "horizon = \"36\""),
        3,
        &["spec.toml", "horizon", "36"],
    ));
    r.push(spec_row(
        Unclear,
        "latency misspelt",
        s("latency = \"weibull\"", "latency = \"weibul\""),
        3,
        &["spec.toml", "weibul"],
    ));
    r.push(fitted_row(
        Unclear,
        "export error names fit.json, not <input>",
        |v| {
            v["prior"][0]["family"] = serde_json::json!("");
            v["prior"][0]["code"] = serde_json::json!({"pymc": {"priors": ["x"]}});
        },
        same,
        &["export", "{d}/fit", "--to", "stan"],
        3,
        &["fit/fit.json", "no stan code"],
    ));
    r.push(cmd_row(
        Unclear,
        "export of a folder without fit.json",
        vec![],
        &["export", "{d}", "--to", "stan"],
        4,
        &["fit.json"],
    ));
    r.push(cmd_row(
        Unclear,
        "report of a missing folder",
        vec![],
        &["report", "{d}/nowhere"],
        4,
        &["nowhere"],
    ));
    r.push(cmd_row(
        Unclear,
        "batch table without id column",
        files(&[
            ("s.toml", base().as_bytes()),
            ("t.csv", b"simulation.seed\n5\n"),
        ]),
        &[
            "batch",
            "--spec",
            "{d}/s.toml",
            "{d}/t.csv",
            "--out",
            "{d}/out",
        ],
        3,
        &["t.csv:1", "id"],
    ));
    r.push(cmd_row(
        Unclear,
        "batch column named twice",
        files(&[
            ("s.toml", base().as_bytes()),
            ("t.csv", b"id,simulation.seed,simulation.seed\nr1,5,6\n"),
        ]),
        &[
            "batch",
            "--spec",
            "{d}/s.toml",
            "{d}/t.csv",
            "--out",
            "{d}/out",
        ],
        3,
        &["t.csv:1", "simulation.seed", "twice"],
    ));

    // ---- Output folders -------------------------------------------------------
    r.push(cmd_row(
        Folder,
        "a bad belief file leaves an existing folder unchanged",
        files(&[("s.toml", s("[fit]", "[fit").as_bytes())]),
        &["fit", "{d}/s.toml", "--out", "{d}/out"],
        3,
        &["s.toml"],
    ));
    r.push(fitted_row(
        Folder,
        "a report refused leaves the fitted folder unchanged",
        |v| v["draws"] = serde_json::json!(9),
        same,
        &["report", "{d}/fit"],
        3,
        &["draws.csv"],
    ));
    r.push(elsewhere(
        Folder,
        "fit killed at every write step",
        "tests/folders.rs::a_fit_killed_at_any_write_leaves_the_old_set_or_the_new_one",
    ));
    r.push(elsewhere(
        Folder,
        "report killed at every write step",
        "tests/folders.rs::a_report_killed_at_any_write_leaves_the_old_set_or_the_new_one",
    ));
    r.push(elsewhere(
        Folder,
        "refit leaves no stale files, keeps the previous set",
        "tests/folders.rs::a_refit_leaves_no_stale_files_and_keeps_the_previous_set",
    ));
    r.push(elsewhere(
        Folder,
        "second writer refused",
        "tests/folders.rs::a_second_writer_is_refused_and_a_file_is_not_a_folder",
    ));
    r.push(elsewhere(
        Folder,
        "report keeps the previous fit, refuses a second writer",
        "tests/folders.rs::a_report_keeps_the_previous_fit_and_refuses_a_second_writer",
    ));
    r.push(elsewhere(
        Folder,
        "batch into another batch's folder",
        "tests/batch.rs::another_batchs_folder_is_refused_and_left_alone",
    ));
    r.push(elsewhere(
        Folder,
        "disk full leaves no partial outputs",
        "tests/bad_input.rs::disk_full_leaves_no_partial_outputs",
    ));
    r.push(elsewhere(
        Folder,
        "interrupted staging recovered at the next start",
        "src/output/folder.rs::an_interrupted_run_leaves_the_old_set_and_is_cleaned_up_next_time",
    ));
    r
}

/// Every file under `dir` with its bytes (empty when `dir` does not exist).
fn contents(dir: &Path) -> BTreeMap<String, Vec<u8>> {
    let mut out = BTreeMap::new();
    let mut stack = vec![dir.to_path_buf()];
    while let Some(d) = stack.pop() {
        let Ok(rd) = std::fs::read_dir(&d) else {
            continue;
        };
        for e in rd.flatten() {
            let p = e.path();
            if p.is_dir() {
                stack.push(p);
            } else {
                let rel = p.strip_prefix(dir).unwrap().to_string_lossy().into_owned();
                out.insert(rel, std::fs::read(&p).unwrap_or_default());
            }
        }
    }
    out
}

fn expand(a: &[String], d: &Path) -> Vec<String> {
    a.iter()
        .map(|s| s.replace("{d}", d.to_str().unwrap()))
        .collect()
}

/// Run one row; returns a description of what went wrong, if anything.
fn run_row(row: &Row, fitted: &Path) -> Option<String> {
    let d = tempfile::tempdir().unwrap();
    let dp = d.path();
    // An existing output folder with a marker: it must come through unchanged.
    let out = dp.join("out");
    std::fs::create_dir(&out).unwrap();
    std::fs::write(out.join("keep.txt"), "earlier results").unwrap();
    let _ = std::os::unix::fs::symlink(dp.join("nowhere-at-all"), dp.join("dangling"));
    let mut runs: Vec<Vec<String>> = Vec::new();
    let mut watched = vec![out.clone()];
    match &row.run {
        Run::Elsewhere(t) => {
            // The named file exists and holds the named test.
            let file = t.split([' ', ':']).next().unwrap();
            let text =
                match std::fs::read_to_string(Path::new(env!("CARGO_MANIFEST_DIR")).join(file)) {
                    Ok(t) => t,
                    Err(e) => return Some(format!("{file}: {e}")),
                };
            if let Some((_, name)) = t.split_once("::") {
                if !text.contains(&format!("fn {name}(")) {
                    return Some(format!("{file} has no test `{name}`"));
                }
            }
            return None;
        }
        Run::Spec(text) => {
            let p = write(dp, "spec.toml", text);
            let p = p.to_str().unwrap().to_string();
            runs.push(vec!["check".into(), p.clone()]);
            runs.push(vec![
                "fit".into(),
                p,
                "--out".into(),
                out.to_str().unwrap().into(),
            ]);
        }
        Run::Cmd(fs, a) => {
            for (n, b) in fs {
                std::fs::write(dp.join(n), b).unwrap();
            }
            runs.push(expand(a, dp));
        }
        Run::Fitted(edit, draws, a) => {
            let f = dp.join("fit");
            std::fs::create_dir(&f).unwrap();
            for e in std::fs::read_dir(fitted).unwrap().flatten() {
                if e.path().is_file() {
                    std::fs::copy(e.path(), f.join(e.file_name())).unwrap();
                }
            }
            let mut v: serde_json::Value =
                serde_json::from_str(&std::fs::read_to_string(f.join("fit.json")).unwrap())
                    .unwrap();
            edit(&mut v);
            let text = if v.is_null() {
                String::new()
            } else {
                v.to_string()
            };
            std::fs::write(f.join("fit.json"), text).unwrap();
            let t = std::fs::read_to_string(f.join("draws.csv")).unwrap();
            std::fs::write(f.join("draws.csv"), draws(&t)).unwrap();
            watched.push(f);
            runs.push(expand(a, dp));
        }
    }
    let before: Vec<_> = watched.iter().map(|w| contents(w)).collect();
    for a in runs {
        let o = bin().args(&a).output().unwrap();
        let err = stderr(&o);
        if o.status.code() != Some(row.code) {
            return Some(format!(
                "{a:?}: exit {:?}, want {}: {err}",
                o.status.code(),
                row.code
            ));
        }
        if err.contains("panicked") || err.contains("RUST_BACKTRACE") {
            return Some(format!("{a:?} panicked: {err}"));
        }
        for n in &row.needles {
            if !err.contains(n) {
                return Some(format!("{a:?}: {n:?} not in: {err}"));
            }
        }
    }
    for (w, b) in watched.iter().zip(&before) {
        if &contents(w) != b {
            return Some(format!("{} changed", w.display()));
        }
    }
    // No staging folder left beside the folders.
    for e in std::fs::read_dir(dp).unwrap().flatten() {
        let n = e.file_name().to_string_lossy().into_owned();
        if n.contains(".new-") || n.contains(".redo-") || n.contains(".tmp-") {
            return Some(format!("left behind: {n}"));
        }
    }
    None
}

/// One fitted folder (512 draws) shared by the fit.json and draws.csv rows.
fn fitted() -> (tempfile::TempDir, PathBuf) {
    let d = tempfile::tempdir().unwrap();
    let spec = write(d.path(), "s.toml", &base());
    let f = d.path().join("fit");
    let o = bin()
        .args(["-q", "fit"])
        .arg(&spec)
        .arg("--out")
        .arg(&f)
        .output()
        .unwrap();
    assert!(o.status.success(), "{}", stderr(&o));
    (d, f)
}

#[test]
fn catalogue_of_bad_input_and_fault_classes() {
    let rows = catalogue();
    let (_keep, fitted) = fitted();
    let mut failures = Vec::new();
    let mut counts: BTreeMap<Kind, (usize, usize)> = BTreeMap::new();
    let mut names = std::collections::BTreeSet::new();
    for row in &rows {
        assert!(names.insert(row.name), "row named twice: {}", row.name);
        let c = counts.entry(row.kind).or_default();
        if matches!(row.run, Run::Elsewhere(_)) {
            c.1 += 1;
        } else {
            c.0 += 1;
        }
        if let Some(f) = run_row(row, &fitted) {
            failures.push(format!("[{:?}] {}: {f}", row.kind, row.name));
        }
    }
    let total: usize = counts.values().map(|c| c.0 + c.1).sum();
    eprintln!("catalogue: {total} classes");
    for (k, (here, other)) in &counts {
        eprintln!(
            "  {k:?}: {} ({here} run here, {other} in other tests)",
            here + other
        );
    }
    assert!(
        failures.is_empty(),
        "{} of {} rows failed:\n{}",
        failures.len(),
        rows.len(),
        failures.join("\n")
    );
    assert!(
        total >= 80,
        "the catalogue has {total} classes, fewer than 80"
    );
}

// ---- Property tests of our readers ---------------------------------------------

use proptest::prelude::*;
use proptest::test_runner::{Config, RngAlgorithm, TestRng, TestRunner};

fn runner(cases: u32, seed: u8) -> TestRunner {
    TestRunner::new_with_rng(
        Config {
            cases,
            failure_persistence: None,
            ..Config::default()
        },
        TestRng::from_seed(RngAlgorithm::ChaCha, &[seed; 32]),
    )
}

/// A byte-level mutation of a valid file: overwrite, delete or duplicate a
/// span, or insert a troublesome token.
#[derive(Debug, Clone)]
enum Mutation {
    Set(usize, u8),
    Delete(usize, usize),
    Duplicate(usize, usize),
    Insert(usize, &'static str),
    Truncate(usize),
}

const TOKENS: &[&str] = &[
    ",",
    "\n",
    "\"",
    "\r\n",
    "nan",
    "inf",
    "-1e308",
    "1e400",
    "\u{0}",
    "\u{ff}",
    "{",
    "}",
    "[",
    "]",
    "null",
    "\"wide\"",
    ",,,,",
    "é",
    "999999999999999999999",
];

fn mutation() -> impl Strategy<Value = Mutation> {
    prop_oneof![
        (any::<usize>(), any::<u8>()).prop_map(|(i, b)| Mutation::Set(i, b)),
        (any::<usize>(), 1usize..40).prop_map(|(i, n)| Mutation::Delete(i, n)),
        (any::<usize>(), 1usize..40).prop_map(|(i, n)| Mutation::Duplicate(i, n)),
        (any::<usize>(), 0..TOKENS.len()).prop_map(|(i, t)| Mutation::Insert(i, TOKENS[t])),
        any::<usize>().prop_map(Mutation::Truncate),
    ]
}

fn mutate(seed: &[u8], ms: &[Mutation]) -> Vec<u8> {
    let mut b = seed.to_vec();
    for m in ms {
        let n = b.len().max(1);
        match m {
            Mutation::Set(i, x) => {
                if !b.is_empty() {
                    b[i % n] = *x;
                }
            }
            Mutation::Delete(i, k) => {
                let s = i % n;
                let e = (s + k).min(b.len());
                if s < e {
                    b.drain(s..e);
                }
            }
            Mutation::Duplicate(i, k) => {
                let s = i % n;
                let e = (s + k).min(b.len());
                if s < e {
                    let span: Vec<u8> = b[s..e].to_vec();
                    b.splice(e..e, span);
                }
            }
            Mutation::Insert(i, t) => {
                let s = (i % n).min(b.len());
                b.splice(s..s, t.bytes());
            }
            Mutation::Truncate(i) => b.truncate(i % n),
        }
    }
    b
}

/// Run `read` on arbitrary bytes and on mutations of `seed` written to
/// `name`: it must not panic, and an error must name the file.
fn reader_property(
    name: &str,
    seed: &[u8],
    read: impl Fn(&Path) -> Result<(), String>,
    rng_seed: u8,
) {
    let d = tempfile::tempdir().unwrap();
    let p = d.path().join(name);
    let check = |bytes: &[u8]| -> Result<(), TestCaseError> {
        std::fs::write(&p, bytes).unwrap();
        match read(&p) {
            Ok(()) => Ok(()),
            Err(e) if e.contains(name) => Ok(()),
            Err(e) => Err(TestCaseError::fail(format!(
                "error without the file name: {e}"
            ))),
        }
    };
    runner(150, rng_seed)
        .run(&proptest::collection::vec(any::<u8>(), 0..600), |b| {
            check(&b)
        })
        .unwrap();
    runner(300, rng_seed.wrapping_add(1))
        .run(&proptest::collection::vec(mutation(), 1..6), |ms| {
            check(&mutate(seed, &ms))
        })
        .unwrap();
}

#[test]
fn design_csv_reader_never_panics_and_locates_errors() {
    let seed = good_csv();
    reader_property(
        "design.csv",
        seed.as_bytes(),
        |p| {
            priorsmith::design::read_csv(p, true)
                .map(|_| ())
                .map_err(|e| e.to_string())
        },
        21,
    );
}

#[test]
fn batch_table_reader_never_panics_and_locates_errors() {
    let seed = "id,simulation.seed,prior.cure_logit.sd,belief.1.quantiles.0.5\n\
                r1,5,0.3,0.2\nr2,6,wide,\"0.25\"\nr3,,!unset,0.3\n";
    reader_property(
        "table.csv",
        seed.as_bytes(),
        |p| {
            priorsmith::batch::table::read(p)
                .map(|_| ())
                .map_err(|e| e.to_string())
        },
        33,
    );
}

#[test]
fn fit_json_reader_never_panics_and_locates_errors() {
    let seed = include_str!("fixtures/all-families-fit.json");
    reader_property(
        "fit.json",
        seed.as_bytes(),
        |p| {
            priorsmith::export::record::read(p)
                .map(|_| ())
                .map_err(|e| e.to_string())
        },
        45,
    );
}
