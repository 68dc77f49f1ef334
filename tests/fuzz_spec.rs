//! Property-based fuzzing of the belief-file parser and validator:
//! `spec::parse(text, None, &Overrides::default())` must return `Ok` or `Err` on
//! arbitrary text and on structured mutations of the shipped starter and demo
//! files (taken from the template and demo registries), never panic. Fixed seed and case counts, so the suite is reproducible;
//! inputs that once broke something live in tests/fuzz-corpus/ and are replayed.
//! (cargo-fuzz needs a nightly toolchain and libFuzzer; proptest runs in the normal
//! suite instead.)

use priorsmith::spec::{parse, Overrides};
use proptest::prelude::*;
use proptest::test_runner::{Config, RngAlgorithm, TestRng, TestRunner};

/// The files the fuzzer starts from: every registered template's starter (its
/// registry entry holds the text), every compiled-in demo scenario, and the
/// multi-endpoint batch base, in that order.
fn seeds() -> Vec<(&'static str, &'static str)> {
    let mut seeds: Vec<(&str, &str)> = priorsmith::templates::TEMPLATES
        .iter()
        .map(|t| (t.name, t.starter))
        .collect();
    seeds.extend(priorsmith::demo::SCENARIOS.iter().map(|d| (d.name, d.text)));
    seeds.push((
        "multi-endpoint",
        include_str!("../demo-data/multi-endpoint/base.toml"),
    ));
    seeds
}

/// Replacement values for a number, string or value on the right of `=`.
const VALUES: &[&str] = &[
    "0",
    "1",
    "2",
    "-1",
    "0.5",
    "1e-320",
    "1e308",
    "-1e308",
    "nan",
    "-nan",
    "inf",
    "-inf",
    "9223372036854775807",
    "-9223372036854775808",
    "1e6",
    "\"\"",
    "\"x\"",
    "[]",
    "{}",
    "true",
    "[inf, nan]",
    "{ fit = [1, 0] }",
    "{ fit = [nan, 1] }",
    "{ fit = [-inf, inf] }",
    "{ fit = [0, 0] }",
    "{ fit = [1e-300, 1e300] }",
    "[{ at = nan, mass = 2 }]",
    "{ \"0.5\" = nan }",
    "{ \"2\" = 1 }",
    "{ \"\" = 1 }",
    "{ family = \"beta\" }",
];

/// Lines that may be inserted anywhere.
const LINES: &[&str] = &[
    "[[belief]]",
    "quantity = \"cure_fraction\"",
    "quantity = \"r2\"",
    "horizon = 1e300",
    "[design]",
    "columns = 3",
    "rows = 0",
    "[prior.shape]",
    "family = \"weibull\"",
    "[fit]",
    "reference = { nope = 1 }",
    "profile = \"nowhere\"",
    "[profile.a]",
    "weights = [0, 0]",
    "experts = [{ weight = -1 }]",
    "histogram = { edges = [1, 0], probs = [1] }",
    "histogram = { edges = [0, 1, 2], probs = [0, 0] }",
    "quantiles = { \"0.5\" = 1, \"0.5000000000000001\" = 1 }",
    "[simulation]",
    "draws = 100",
    "x = \"\u{0}\"",
    "é = 1",
];

#[derive(Debug, Clone)]
enum Mutation {
    /// Replace the value of the k-th `key = value` line.
    Value(usize, usize),
    DeleteLine(usize),
    DuplicateLine(usize),
    SwapLines(usize, usize),
    InsertLine(usize, usize),
    /// Cut the text at a fraction of its length (in 1/1000).
    Truncate(usize),
    /// Flip one byte to a printable ASCII character.
    Byte(usize, u8),
}

fn mutation() -> impl Strategy<Value = Mutation> {
    prop_oneof![
        4 => (any::<usize>(), 0..VALUES.len()).prop_map(|(k, v)| Mutation::Value(k, v)),
        1 => any::<usize>().prop_map(Mutation::DeleteLine),
        1 => any::<usize>().prop_map(Mutation::DuplicateLine),
        1 => (any::<usize>(), any::<usize>()).prop_map(|(a, b)| Mutation::SwapLines(a, b)),
        2 => (any::<usize>(), 0..LINES.len()).prop_map(|(a, l)| Mutation::InsertLine(a, l)),
        1 => (0usize..1000).prop_map(Mutation::Truncate),
        1 => (any::<usize>(), 32u8..127).prop_map(|(i, b)| Mutation::Byte(i, b)),
    ]
}

fn apply(text: &str, muts: &[Mutation]) -> String {
    let mut lines: Vec<String> = text.lines().map(str::to_string).collect();
    for m in muts {
        if lines.is_empty() {
            lines.push(String::new());
        }
        let n = lines.len();
        match m {
            Mutation::Value(k, v) => {
                let assigns: Vec<usize> = (0..n)
                    .filter(|&i| !lines[i].trim_start().starts_with('#') && lines[i].contains('='))
                    .collect();
                if let Some(&i) = assigns.get(k % assigns.len().max(1)) {
                    let key = lines[i].split('=').next().unwrap_or("").to_string();
                    lines[i] = format!("{key}= {}", VALUES[*v]);
                }
            }
            Mutation::DeleteLine(i) => {
                lines.remove(i % n);
            }
            Mutation::DuplicateLine(i) => {
                let l = lines[i % n].clone();
                lines.insert(i % n, l);
            }
            Mutation::SwapLines(a, b) => lines.swap(a % n, b % n),
            Mutation::InsertLine(a, l) => lines.insert(a % (n + 1), LINES[*l].to_string()),
            Mutation::Truncate(f) => {
                let mut s = lines.join("\n");
                let mut cut = s.len() * f / 1000;
                while !s.is_char_boundary(cut) {
                    cut -= 1;
                }
                s.truncate(cut);
                lines = s.lines().map(str::to_string).collect();
            }
            Mutation::Byte(i, b) => {
                let mut s = lines.join("\n").into_bytes();
                if !s.is_empty() {
                    let k = i % s.len();
                    s[k] = *b;
                }
                let s = String::from_utf8_lossy(&s).to_string();
                lines = s.lines().map(str::to_string).collect();
            }
        }
    }
    lines.join("\n")
}

/// Validate `text`; a panic fails the property (proptest catches it and shrinks).
fn survives(text: &str) {
    let _ = parse(text, None, &Overrides::default());
}

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

#[test]
fn the_shipped_files_are_valid() {
    // The fuzzer starts from files that validate (the multi-endpoint base is
    // completed by its batch table, so it only needs to parse).
    for (name, text) in seeds() {
        let r = parse(text, None, &Overrides::default());
        assert!(
            r.is_ok() || name == "multi-endpoint",
            "{name}: {:?}",
            r.err()
        );
    }
}

#[test]
fn arbitrary_text_never_panics() {
    runner(600, 1)
        .run(&".{0,400}", |s| {
            survives(&s);
            Ok(())
        })
        .unwrap();
    runner(200, 2)
        .run(&proptest::collection::vec(any::<u8>(), 0..400), |b| {
            survives(&String::from_utf8_lossy(&b));
            Ok(())
        })
        .unwrap();
}

#[test]
fn mutated_starters_never_panic() {
    let seeds = seeds();
    let strategy = (0..seeds.len(), proptest::collection::vec(mutation(), 1..5));
    runner(1600, 3)
        .run(&strategy, |(k, muts)| {
            survives(&apply(seeds[k].1, &muts));
            Ok(())
        })
        .unwrap();
}

#[test]
fn the_regression_corpus_replays() {
    let dir = std::path::Path::new(env!("CARGO_MANIFEST_DIR")).join("tests/fuzz-corpus");
    let mut n = 0;
    for e in std::fs::read_dir(&dir).unwrap() {
        let p = e.unwrap().path();
        if p.extension().is_some_and(|x| x == "toml") {
            let text = std::fs::read_to_string(&p).unwrap();
            let r = std::panic::catch_unwind(|| parse(&text, Some(&p), &Overrides::default()));
            assert!(r.is_ok(), "{} panicked", p.display());
            // Each corpus file is invalid on purpose: it must be refused as bad
            // input (not as a numerical or internal failure), naming the file.
            match r.unwrap() {
                Ok(_) => panic!("{}: accepted, expected an error", p.display()),
                Err(e) => {
                    let user_kind = matches!(
                        e,
                        priorsmith::Error::Input { .. }
                            | priorsmith::Error::Dist(_)
                            | priorsmith::Error::Limit(_)
                    );
                    assert!(user_kind, "{}: {e:?}", p.display());
                    let text = e.to_string();
                    assert!(text.contains(&p.display().to_string()), "{text}");
                }
            }
            n += 1;
        }
    }
    assert!(n >= 5, "corpus has only {n} files");
}
