//! Export a fitted prior as ready-to-paste code for a modelling language: Stan,
//! PyMC, R's brms, or plain JSON.
//!
//! The exporters read `fit.json` (see [`record`]), never the spec. Each prior
//! statement there is one [`Item`]:
//!
//! * [`Item::Scalar`]: a parameter with one of our families (`crate::dist`) and its
//!   parameters in registry order. Each language file holds one table that maps
//!   our parameterisation to the language's own (Stan `gamma(shape, rate)`,
//!   PyMC `Gamma(alpha=shape, beta=rate)`, …). A family a language lacks is
//!   written as an exact equivalent on a transformed scale (a logit-normal is a
//!   normal on the logit scale, a log-logistic a logistic on the log scale),
//!   with a comment; a family without a table entry is an error, never a guess.
//! * [`Item::Supplied`]: a statement whose code the template wrote itself (for
//!   vector parameters such as regression coefficients under a horseshoe). Its
//!   fit.json entry carries `code = { <language> = { <section> = [lines] } }`,
//!   sections `parameters`, `transformed_parameters`, `model` for Stan, `model`
//!   for PyMC, `priors` (set_prior calls and `#` comment lines) for brms. The
//!   exporter pastes the lines into the right place; a language the template did
//!   not supply is an error, and so is a language whose only section is
//!   `unsupported = [reason]` (the template knows the language cannot express the
//!   prior exactly; the error gives the reason). The regression templates supply
//!   code this way (`templates::regression::code`).
//!
//! Every export starts with a header comment: tool version, spec digest, seed,
//! export date (UTC; `SOURCE_DATE_EPOCH` fixes it, the reproducible-builds
//! convention) and the fit's verdict. Numbers are written with 6 significant
//! digits (the JSON export keeps full precision): far finer than the Monte Carlo
//! precision of a fit.

pub mod brms;
pub mod json;
pub mod pymc;
pub mod record;
pub mod stan;

use crate::dist::FamilyInfo;
use crate::error::{Error, Location, Result};
use std::collections::BTreeMap;
use std::path::Path;

pub use record::{FitRecord, Header};

/// Target languages.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Lang {
    Stan,
    Pymc,
    Brms,
    Json,
}

impl Lang {
    pub const ALL: [Lang; 4] = [Lang::Stan, Lang::Pymc, Lang::Brms, Lang::Json];

    pub fn name(&self) -> &'static str {
        match self {
            Lang::Stan => "stan",
            Lang::Pymc => "pymc",
            Lang::Brms => "brms",
            Lang::Json => "json",
        }
    }
}

/// A scalar prior: family from our registry, parameters in registry order.
#[derive(Debug, Clone)]
pub struct Scalar {
    pub parameter: String,
    pub family: &'static FamilyInfo,
    pub params: Vec<f64>,
    pub about: String,
}

impl Scalar {
    /// Parameter `name` of the family (registry names, e.g. "rate").
    pub fn get(&self, name: &str) -> f64 {
        self.family
            .params
            .iter()
            .position(|p| *p == name)
            .map_or(f64::NAN, |i| self.params[i])
    }
}

/// Code a template supplied for its own statement: language → section → lines.
#[derive(Debug, Clone)]
pub struct Supplied {
    pub parameter: String,
    pub about: String,
    pub code: BTreeMap<String, BTreeMap<String, Vec<String>>>,
}

impl Supplied {
    /// The lines of `section` for `lang`, or a clear error when not supplied.
    pub fn lines(&self, lang: Lang, section: &str) -> Result<&[String]> {
        let l = self.code.get(lang.name()).ok_or_else(|| {
            unsupported(format!(
                "prior statement for `{}` has no {} code (its template supplied: {})",
                self.parameter,
                lang.name(),
                self.code.keys().cloned().collect::<Vec<_>>().join(", ")
            ))
        })?;
        if let Some(why) = l.get("unsupported") {
            return Err(unsupported(format!(
                "prior statement for `{}` cannot be exported to {}: {}",
                self.parameter,
                lang.name(),
                why.join(" ")
            )));
        }
        Ok(l.get(section).map(Vec::as_slice).unwrap_or(&[]))
    }
}

#[derive(Debug, Clone)]
pub enum Item {
    Scalar(Scalar),
    Supplied(Supplied),
}

impl Item {
    pub fn parameter(&self) -> &str {
        match self {
            Item::Scalar(s) => &s.parameter,
            Item::Supplied(s) => &s.parameter,
        }
    }
}

/// An export the language cannot express (a clear error, not wrong code).
pub fn unsupported(msg: impl Into<String>) -> Error {
    Error::input(Location::default(), msg)
}

/// Render the prior of `rec` in `lang`.
pub fn render(rec: &FitRecord, lang: Lang) -> Result<String> {
    match lang {
        Lang::Stan => stan::render(&rec.header, &rec.items),
        Lang::Pymc => pymc::render(&rec.header, &rec.items),
        Lang::Brms => brms::render(&rec.header, &rec.items),
        Lang::Json => json::render(&rec.header, &rec.items),
    }
}

/// A template's likelihood sections for one language (section → lines).
pub type Sections = BTreeMap<String, Vec<String>>;

/// Render `rec` in `lang` as a complete model: the template's likelihood (with
/// right censoring, in our parameterisation; `fit.json` key `likelihood`) and
/// the fitted prior. Stan and PyMC only; brms has no mixture-cure or
/// promotion-time family, and its own Weibull is parameterised by its mean,
/// so it is refused with the reason (the brms prior export stays available).
pub fn render_complete(rec: &FitRecord, lang: Lang) -> Result<String> {
    let lik = |l: Lang| {
        rec.fit
            .likelihood
            .as_ref()
            .and_then(|c| c.get(l.name()))
            .ok_or_else(|| {
                unsupported(format!(
                    "template {} supplies no {} likelihood: export the prior alone (without \
                     --with-likelihood)",
                    rec.header.template,
                    l.name()
                ))
            })
    };
    match lang {
        Lang::Stan => stan::render_with(&rec.header, &rec.items, Some(lik(lang)?)),
        Lang::Pymc => pymc::render_with(&rec.header, &rec.items, Some(lik(lang)?)),
        // A prior brms cannot state is refused with the template's own reason first.
        Lang::Brms => render(rec, Lang::Brms).and(Err(unsupported(
            "--with-likelihood is not available for brms: brms has no mixture-cure or \
             promotion-time family, and its weibull() family is parameterised by the mean \
             (mu = lambda * Gamma(1 + 1/shape)), not by our scale; export --to stan or --to \
             pymc for a complete model, or --to brms without --with-likelihood for the priors",
        ))),
        Lang::Json => Err(unsupported(
            "--with-likelihood writes model code: use --to stan or --to pymc",
        )),
    }
}

/// Read `dir/fit.json` and render its prior in `lang`.
pub fn export_dir(dir: &Path, lang: Lang) -> Result<String> {
    export_dir_with(dir, lang, false)
}

/// Read `dir/fit.json` and render it in `lang`, with the template's likelihood
/// when `likelihood` is set ([`render_complete`]).
pub fn export_dir_with(dir: &Path, lang: Lang, likelihood: bool) -> Result<String> {
    let file = dir.join("fit.json");
    let rec = record::read(&file)?;
    // An export the language cannot express names the fit.json it came from.
    if likelihood {
        render_complete(&rec, lang)
    } else {
        render(&rec, lang)
    }
    .map_err(|e| e.in_file(&file))
}

pub use crate::numerics::format::code as num;

/// The header lines (without comment markers).
pub fn header_lines(h: &Header, lang: &str) -> Vec<String> {
    vec![
        format!("Prior exported by priorsmith {} for {lang}", h.tool_version),
        format!("fit: {} (template {})", h.title, h.template),
        format!("spec sha256 {}", h.spec_digest),
        format!(
            "seed {}, {} draws, exported {}, verdict: {}",
            h.seed, h.draws, h.date, h.verdict
        ),
        "A fitted prior is a proposal: review it before use (see the report's caution).".into(),
    ]
}

/// Identifier rules shared by the three languages: ASCII letter first, then
/// letters, digits, underscores; no trailing `__` (reserved in Stan).
pub fn check_ident(name: &str, lang: Lang, reserved: &[&str]) -> Result<()> {
    let mut ch = name.chars();
    let ok = ch.next().is_some_and(|c| c.is_ascii_alphabetic())
        && ch.all(|c| c.is_ascii_alphanumeric() || c == '_')
        && !name.ends_with("__");
    if !ok || reserved.contains(&name) {
        return Err(unsupported(format!(
            "parameter name `{name}` is not a valid {} identifier{}",
            lang.name(),
            if ok { " (reserved word)" } else { "" }
        )));
    }
    Ok(())
}

/// Check that no derived name (e.g. `p_logit`) collides with a parameter.
pub fn check_unique(names: &[String], lang: Lang) -> Result<()> {
    let mut seen = std::collections::BTreeSet::new();
    for n in names {
        if !seen.insert(n) {
            return Err(unsupported(format!(
                "{} export would declare `{n}` twice (a parameter's name collides with a \
                 transformed helper such as `<name>_logit`); rename the parameter",
                lang.name()
            )));
        }
    }
    Ok(())
}

/// Today's date (UTC), or the date of `SOURCE_DATE_EPOCH` when set.
pub fn today() -> String {
    let secs = std::env::var("SOURCE_DATE_EPOCH")
        .ok()
        .and_then(|s| s.trim().parse::<i64>().ok())
        .unwrap_or_else(|| {
            std::time::SystemTime::now()
                .duration_since(std::time::UNIX_EPOCH)
                .map_or(0, |d| d.as_secs() as i64)
        });
    civil_date(secs.div_euclid(86_400))
}

/// Days since 1970-01-01 → "YYYY-MM-DD" (proleptic Gregorian; the
/// days-to-civil algorithm of H. Hinnant, "chrono-Compatible Low-Level Date
/// Algorithms", 2013).
pub fn civil_date(days: i64) -> String {
    let z = days + 719_468;
    let era = z.div_euclid(146_097);
    let doe = z - era * 146_097;
    let yoe = (doe - doe / 1460 + doe / 36_524 - doe / 146_096) / 365;
    let doy = doe - (365 * yoe + yoe / 4 - yoe / 100);
    let mp = (5 * doy + 2) / 153;
    let d = doy - (153 * mp + 2) / 5 + 1;
    let m = if mp < 10 { mp + 3 } else { mp - 9 };
    let y = yoe + era * 400 + i64::from(m <= 2);
    format!("{y:04}-{m:02}-{d:02}")
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn dates() {
        // Reference dates: Python 3 `datetime.date(1970,1,1) + timedelta(days=n)`.
        assert_eq!(civil_date(0), "1970-01-01");
        assert_eq!(civil_date(11_016), "2000-02-29");
        assert_eq!(civil_date(20_454), "2026-01-01");
        assert_eq!(civil_date(-1), "1969-12-31");
    }

    #[test]
    fn numbers() {
        assert_eq!(num(0.25), "0.25");
        assert_eq!(num(-1.1014022836784374), "-1.1014");
        assert_eq!(num(0.5117406019809507), "0.511741");
        assert_eq!(num(2.0), "2");
        assert_eq!(num(1.234567e-7), "1.23457e-7");
        assert_eq!(num(123456789.0), "123457000");
    }

    #[test]
    fn identifiers() {
        assert!(check_ident("cure_logit", Lang::Stan, &[]).is_ok());
        assert!(check_ident("2x", Lang::Stan, &[]).is_err());
        assert!(check_ident("a__", Lang::Stan, &[]).is_err());
        assert!(check_ident("lambda", Lang::Pymc, &["lambda"]).is_err());
    }
}
