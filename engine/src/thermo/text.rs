//! Numbers and quantities in the models' messages (the model layer formats
//! its own words: it imports nothing outside itself). [`format_sig`] is the
//! one significant-figure formatter of the engine: reports re-export it as
//! `units::format_sig`.

/// A number for a message: 6 significant figures ([`format_sig`]).
pub(crate) fn fmt_num(x: f64) -> String {
    format_sig(x, 6)
}

/// Format with `sig` significant figures (at least 1): plain decimal when
/// 1e-3 <= |v| < 1e6 after rounding, trailing zeros after the point
/// stripped ("101.4", "0.8", "3232", "123500"); exponent form otherwise
/// ("1.235e-5", "4.5e9"). Zero (and anything that rounds to it) is "0",
/// never "-0"; non-finite values print as "NaN", "inf", "-inf".
pub fn format_sig(v: f64, sig: usize) -> String {
    if v.is_nan() {
        return "NaN".into();
    }
    if v.is_infinite() {
        return if v > 0.0 { "inf".into() } else { "-inf".into() };
    }
    if v == 0.0 {
        return "0".into();
    }
    // f64 carries at most 17 significant decimal digits.
    let sig = sig.clamp(1, 17);
    // Round once, in exponent form: mantissa digits and decimal exponent.
    let e_form = format!("{:.*e}", sig - 1, v.abs());
    let Some((mantissa, exp)) = e_form.split_once('e') else {
        return e_form;
    };
    let Ok(exp) = exp.parse::<i32>() else {
        return e_form;
    };
    let digits: String = mantissa.chars().filter(char::is_ascii_digit).collect();
    if digits.chars().all(|c| c == '0') {
        return "0".into();
    }
    let sign = if v < 0.0 { "-" } else { "" };
    let body = if (-3..6).contains(&exp) {
        plain(&digits, exp)
    } else {
        let m = strip_fraction_zeros(mantissa);
        format!("{m}e{exp}")
    };
    format!("{sign}{body}")
}

/// Digits `d1 d2 d3 ...` meaning d1.d2d3... x 10^exp, as plain decimal.
fn plain(digits: &str, exp: i32) -> String {
    let n = digits.len() as i32;
    let s = if exp < 0 {
        let zeros = "0".repeat(usize::try_from(-exp - 1).unwrap_or(0));
        format!("0.{zeros}{digits}")
    } else if exp + 1 >= n {
        let zeros = "0".repeat(usize::try_from(exp + 1 - n).unwrap_or(0));
        format!("{digits}{zeros}")
    } else {
        let split = usize::try_from(exp + 1).unwrap_or(0);
        let (int, frac) = digits.split_at(split);
        format!("{int}.{frac}")
    };
    strip_fraction_zeros(&s)
}

/// "1.2300" -> "1.23", "4.000" -> "4", "120" -> "120".
fn strip_fraction_zeros(s: &str) -> String {
    if s.contains('.') {
        s.trim_end_matches('0').trim_end_matches('.').to_string()
    } else {
        s.to_string()
    }
}

/// The shortest text that reads back as exactly `x` (plain decimal for
/// 1e-4 <= |x| < 1e15, exponent form otherwise): for numbers written back
/// into a worksheet or a formula, where significant figures would round.
pub fn shortest_text(x: f64) -> String {
    let a = x.abs();
    if a == 0.0 || (1e-4..1e15).contains(&a) {
        format!("{x}")
    } else {
        format!("{x:e}")
    }
}

/// A pressure for a message in Pa, kPa or MPa.
pub(crate) fn fmt_p(p: f64) -> String {
    if p.abs() >= 1e6 {
        format!("{} MPa", fmt_num(p / 1e6))
    } else if p.abs() >= 1e3 {
        format!("{} kPa", fmt_num(p / 1e3))
    } else {
        format!("{} Pa", fmt_num(p))
    }
}

/// A temperature for a message, in K.
pub(crate) fn fmt_t(t: f64) -> String {
    format!("{} K", fmt_num(t))
}
