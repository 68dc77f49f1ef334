//! How a family is written in the modelling languages that `export` targets.
//!
//! Each family declares, per language, either a form — a function from its
//! parameter values to the statement in that language's own parameterisation —
//! or [`Form::Absent`] with the reason it cannot be stated there. The exporters
//! (`export::stan`, `export::pymc`, `export::brms`) only render what the family
//! gives them; they never match on family names.
//!
//! A family a language lacks may still be written exactly on a transformed
//! scale: the distribution is stated for a helper variable `<name>_<suffix>`
//! and the parameter is a function of it ([`StanForm::via`], [`PymcForm::via`]).
//! brms prior strings are Stan distribution calls (brms documentation of
//! `set_prior`), so a family's brms form is a [`StanForm`] too.

/// A family's form in one language, or why it has none.
#[derive(Clone, Copy)]
pub enum Form<F> {
    /// The family is written by this function.
    Written(F),
    /// The language cannot state the family; the reason is shown to the user.
    Absent(&'static str),
}

/// A family's forms in the three languages.
#[derive(Clone, Copy)]
pub struct Forms {
    pub stan: Form<StanFn>,
    pub pymc: Form<PymcFn>,
    /// brms prior strings are Stan calls: usually the Stan form itself.
    pub brms: Form<StanFn>,
}

impl Forms {
    /// Written in all three languages, brms with the Stan form.
    pub const fn written(stan: StanFn, pymc: PymcFn) -> Self {
        Self {
            stan: Form::Written(stan),
            pymc: Form::Written(pymc),
            brms: Form::Written(stan),
        }
    }
}

/// Writes a family in Stan syntax (used for Stan and for brms prior strings).
pub type StanFn = fn(&Args) -> StanForm;
/// Writes a family as a PyMC 5 constructor.
pub type PymcFn = fn(&Args) -> PymcForm;

/// What a form function is given.
pub struct Args<'a> {
    /// The prior's parameter name in the exported code.
    pub name: &'a str,
    /// The family's parameter values, in registry order.
    pub values: &'a [f64],
    /// The exporter's number format (for numbers written into notes).
    pub num: fn(f64) -> String,
}

impl Args<'_> {
    /// Parameter value `i` (NaN when absent: the exporters validated the count).
    pub fn v(&self, i: usize) -> f64 {
        self.values.get(i).copied().unwrap_or(f64::NAN)
    }

    /// Parameter value `i` in the exporter's number format.
    pub fn n(&self, i: usize) -> String {
        (self.num)(self.v(i))
    }
}

/// The parameter is a function of a helper variable that carries the distribution.
#[derive(Debug, Clone, PartialEq)]
pub struct Helper {
    /// The helper is `<name>_<suffix>`.
    pub suffix: &'static str,
    /// The language's function from the helper to the parameter (`inv_logit`, `exp`).
    pub inverse: &'static str,
    /// Bounds of the parameter itself (declared in Stan's transformed parameters).
    pub lower: Option<f64>,
    pub upper: Option<f64>,
}

/// A prior statement in Stan syntax: `<variable> ~ <dist>(<args>)`.
#[derive(Debug, Clone, PartialEq)]
pub struct StanForm {
    /// Stan's distribution name, e.g. `gamma`.
    pub dist: &'static str,
    /// Its arguments in Stan's order.
    pub args: Vec<f64>,
    /// Bounds of the declared variable (Stan constraint; brms `lb` / `ub`).
    pub lower: Option<f64>,
    pub upper: Option<f64>,
    pub helper: Option<Helper>,
    /// A comment written above the statement.
    pub note: Option<String>,
}

impl StanForm {
    /// An unbounded statement without a note.
    pub fn new(dist: &'static str, args: Vec<f64>) -> Self {
        Self {
            dist,
            args,
            lower: None,
            upper: None,
            helper: None,
            note: None,
        }
    }

    /// Declare the variable with these bounds.
    pub fn bounded(mut self, lower: Option<f64>, upper: Option<f64>) -> Self {
        self.lower = lower;
        self.upper = upper;
        self
    }

    /// Declare the variable `<lower=0>`.
    pub fn positive(self) -> Self {
        self.bounded(Some(0.0), None)
    }

    pub fn noted(mut self, note: impl Into<String>) -> Self {
        self.note = Some(note.into());
        self
    }

    /// A half family: the full distribution on a `<lower=0>` parameter, whose
    /// bound truncates it (the constant factor 2 does not matter for sampling);
    /// `label` names the family and its values in the note.
    pub fn truncated_at_zero(self, label: String) -> Self {
        self.positive()
            .noted(format!("{label}: the <lower=0> bound truncates"))
    }

    /// State the distribution for `<name>_<suffix>`; the parameter is
    /// `inverse(<name>_<suffix>)` with the given bounds.
    pub fn via(
        mut self,
        suffix: &'static str,
        inverse: &'static str,
        lower: Option<f64>,
        upper: Option<f64>,
    ) -> Self {
        self.helper = Some(Helper {
            suffix,
            inverse,
            lower,
            upper,
        });
        self
    }

    /// `dist(a, b, …)` with numbers in the format `num`.
    pub fn call(&self, num: fn(f64) -> String) -> String {
        let args: Vec<String> = self.args.iter().map(|a| num(*a)).collect();
        format!("{}({})", self.dist, args.join(", "))
    }
}

/// A PyMC 5 constructor: `<variable> = pm.<class>("<variable>", kw=value, …)`.
#[derive(Debug, Clone, PartialEq)]
pub struct PymcForm {
    /// The class in `pymc`, e.g. `Gamma`.
    pub class: &'static str,
    /// Keyword arguments in order.
    pub kwargs: Vec<(&'static str, f64)>,
    /// Stated for `<name>_<suffix>`; the parameter is
    /// `pm.Deterministic(name, pm.math.<inverse>(<name>_<suffix>))`.
    pub helper: Option<(&'static str, &'static str)>,
    /// A comment line written above the constructor.
    pub note: Option<String>,
}

impl PymcForm {
    pub fn new(class: &'static str, kwargs: Vec<(&'static str, f64)>) -> Self {
        Self {
            class,
            kwargs,
            helper: None,
            note: None,
        }
    }

    pub fn noted(mut self, note: impl Into<String>) -> Self {
        self.note = Some(note.into());
        self
    }

    /// State the distribution for `<name>_<suffix>`; the parameter is
    /// `pm.math.<inverse>` of it.
    pub fn via(mut self, suffix: &'static str, inverse: &'static str) -> Self {
        self.helper = Some((suffix, inverse));
        self
    }

    /// `kw=value, …` with numbers in the format `num`.
    pub fn kwargs_text(&self, num: fn(f64) -> String) -> String {
        let kw: Vec<String> = self
            .kwargs
            .iter()
            .map(|(k, v)| format!("{k}={}", num(*v)))
            .collect();
        kw.join(", ")
    }
}
