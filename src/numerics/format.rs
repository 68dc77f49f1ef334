//! Every way priorsmith writes a number, in one place.
//!
//! * [`code`]: for modelling-language code, 6 significant digits in the shortest
//!   form ("0.25", "-1.1014", "2e-07");
//! * [`display`]: for the terminal, summary.txt and the report's tables: [`sig`]
//!   at 4 significant digits ("0.1235", "123.5", "1e-5"), "inf" / "-inf";
//! * [`html`]: as `display`, with "∞", "−∞" and "—" (not a number) for the report;
//! * [`sig`]: `n` significant digits, trailing zeros dropped, scientific
//!   ("2.83e-5") outside [0.001, 1 000 000): the explanations of verdicts, the
//!   report's tables;
//! * [`csv`]: every digit (shortest round-trip form), "inf" / "-inf", for tables
//!   that are read back.

/// A number for code: 6 significant digits, shortest form.
pub fn code(x: f64) -> String {
    if x == 0.0 {
        return "0".into();
    }
    let r: f64 = format!("{x:.5e}").parse().unwrap_or(x);
    let a = r.abs();
    if (1e-4..1e15).contains(&a) {
        format!("{r}")
    } else {
        format!("{r:e}")
    }
}

/// Significant digits of every number a reader sees ([`display`], [`html`]).
pub const DISPLAY_DIGITS: usize = 4;

/// A number for the terminal, summary.txt and the report: [`sig`] at
/// [`DISPLAY_DIGITS`] significant digits, one style for every magnitude.
pub fn display(x: f64) -> String {
    sig(x, DISPLAY_DIGITS)
}

/// A number to `digits` significant digits, trailing zeros dropped ("0.0202",
/// "0.02", "6.55", "15", "2.83e-5"); "inf", "-inf", "nan".
pub fn sig(x: f64, digits: usize) -> String {
    if x.is_nan() {
        return "nan".into();
    }
    if x.is_infinite() {
        return if x > 0.0 { "inf".into() } else { "-inf".into() };
    }
    if x == 0.0 {
        return "0".into();
    }
    let digits = digits.max(1);
    // Round first, so 9.996 at 3 digits is 10 (exponent 1), not 10.00.
    let r: f64 = format!("{x:.*e}", digits - 1).parse().unwrap_or(x);
    let e = r.abs().log10().floor() as i32;
    let trim = |s: String| -> String {
        if s.contains('.') {
            s.trim_end_matches('0').trim_end_matches('.').to_string()
        } else {
            s
        }
    };
    if (-3..6).contains(&e) {
        let decimals = (digits as i32 - 1 - e).max(0) as usize;
        trim(format!("{r:.decimals$}"))
    } else {
        let s = format!("{r:.*e}", digits - 1);
        match s.split_once('e') {
            Some((m, ex)) => format!("{}e{ex}", trim(m.to_string())),
            None => s,
        }
    }
}

/// A number for the HTML report.
pub fn html(x: f64) -> String {
    if x.is_nan() {
        "—".into()
    } else if x.is_infinite() {
        if x > 0.0 {
            "∞".into()
        } else {
            "−∞".into()
        }
    } else {
        display(x)
    }
}

/// A number for a CSV table: exact (shortest round-trip form).
pub fn csv(x: f64) -> String {
    if x == f64::INFINITY {
        "inf".into()
    } else if x == f64::NEG_INFINITY {
        "-inf".into()
    } else {
        format!("{x}")
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn each_form() {
        assert_eq!(code(0.25), "0.25");
        assert_eq!(code(-1.101449), "-1.10145");
        assert_eq!(code(2e-7), "2e-7");
        assert_eq!(display(0.123456), "0.1235");
        assert_eq!(display(123.456), "123.5");
        assert_eq!(display(1e-5), "1e-5");
        assert_eq!(display(2.834e-4), "2.834e-4");
        assert_eq!(display(0.0013), "0.0013");
        assert_eq!(display(12345.6), "12350");
        assert_eq!(display(0.5), "0.5");
        assert_eq!(html(f64::NAN), "—");
        assert_eq!(html(f64::NEG_INFINITY), "−∞");
        assert_eq!(csv(0.1 + 0.2), "0.30000000000000004");
        assert_eq!(csv(f64::INFINITY), "inf");
        assert_eq!(sig(0.0202, 3), "0.0202");
        assert_eq!(sig(0.02, 3), "0.02");
        assert_eq!(sig(6.5549, 3), "6.55");
        assert_eq!(sig(9.996, 3), "10");
        assert_eq!(sig(-1234.5, 3), "-1230");
        assert_eq!(sig(2.834e-5, 3), "2.83e-5");
        assert_eq!(sig(7.328e6, 4), "7.328e6");
        assert_eq!(sig(f64::NEG_INFINITY, 3), "-inf");
    }
}
