//! Numbers and quantities in the models' messages (the model layer formats
//! its own words: it imports nothing outside itself).

/// A number for a message: up to 6 significant figures, no trailing zeros
/// ("7000", "0.15", "1.3", "1.23457e+07").
pub(crate) fn fmt_num(x: f64) -> String {
    if !x.is_finite() {
        return format!("{x}");
    }
    if x == 0.0 {
        return "0".to_string();
    }
    let mag = x.abs().log10().floor();
    if (-4.0..10.0).contains(&mag) {
        let decimals = (5.0 - mag).max(0.0) as usize;
        let s = format!("{x:.decimals$}");
        if s.contains('.') {
            s.trim_end_matches('0').trim_end_matches('.').to_string()
        } else {
            s
        }
    } else {
        let s = format!("{x:.5e}");
        match s.split_once('e') {
            Some((m, e)) => {
                let m = if m.contains('.') {
                    m.trim_end_matches('0').trim_end_matches('.')
                } else {
                    m
                };
                format!("{m}e{e}")
            }
            None => s,
        }
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
