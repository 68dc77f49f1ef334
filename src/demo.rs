//! The demo scenarios in `demo-data/`, compiled into the binary so that an
//! installed `priorsmith demo` works from any folder. All scenarios are invented.

pub struct Scenario {
    pub name: &'static str,
    pub text: &'static str,
}

/// Every shipped scenario. Adding one adds a file and a line here.
pub static SCENARIOS: &[Scenario] = &[
    Scenario {
        name: "relapse-free-cure",
        text: include_str!("../demo-data/relapse-free-cure.toml"),
    },
    Scenario {
        name: "two-arm-cure",
        text: include_str!("../demo-data/two-arm-cure.toml"),
    },
    Scenario {
        name: "two-arm-hazard-ratio",
        text: include_str!("../demo-data/two-arm-hazard-ratio.toml"),
    },
    Scenario {
        name: "wide-design-r2",
        text: include_str!("../demo-data/wide-design-r2.toml"),
    },
];
