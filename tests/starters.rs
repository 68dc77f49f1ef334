//! Every `priorsmith new TEMPLATE` starter fits "met within noise" or "met
//! approximately" as shipped: a user's first fit must not fail on our example.
//! The list comes from the template registry, so a new template's starter is
//! fitted here without editing this file.

mod common;
use common::*;

#[test]
fn every_starter_fits_as_shipped() {
    let d = tempfile::tempdir().unwrap();
    for t in priorsmith::templates::TEMPLATES {
        let spec = d.path().join(format!("{}.toml", t.name));
        let o = run(&["new", t.name, "--out", spec.to_str().unwrap()]);
        assert!(o.status.success(), "new {}: {}", t.name, stderr(&o));
        let out = d.path().join(t.name);
        let o = run(&[
            "--require-met",
            "fit",
            spec.to_str().unwrap(),
            "--out",
            out.to_str().unwrap(),
        ]);
        let j = json(&out.join("fit.json"));
        assert_eq!(
            o.status.code(),
            Some(0),
            "{}: verdict {} — {}",
            t.name,
            j["verdict"],
            stderr(&o)
        );
        let v = j["verdict"].as_str().unwrap();
        assert!(
            v == "met_within_noise" || v == "met_approximately",
            "{}: {v}",
            t.name
        );
        assert!(
            !stderr(&o).contains("warning"),
            "{}: {}",
            t.name,
            stderr(&o)
        );
    }
}
