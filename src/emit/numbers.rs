//! Numbers as canonode prints them: doubles with 17 significant digits,
//! complex values as `a+bi`. One place, used by every report.

/// A double with 17 significant digits, positional for moderate exponents.
pub fn fmt17(x: f64) -> String {
    if x == 0.0 {
        return "0".to_string();
    }
    if !x.is_finite() {
        // Never printed as a number: callers report such values as a status.
        return "(not finite)".to_string();
    }
    let s = format!("{:.16e}", x);
    let (mant, exp) = s.split_once('e').expect("exponent form");
    let exp: i32 = exp.parse().expect("integer exponent");
    let neg = mant.starts_with('-');
    let digits: String = mant.chars().filter(|c| c.is_ascii_digit()).collect();
    let body = if (-5..17).contains(&exp) {
        if exp >= 0 {
            let e = exp as usize + 1;
            let (ip, fp) = digits.split_at(e.min(digits.len()));
            let fp = fp.trim_end_matches('0');
            if fp.is_empty() {
                ip.to_string()
            } else {
                format!("{ip}.{fp}")
            }
        } else {
            let zeros = "0".repeat((-exp - 1) as usize);
            format!("0.{zeros}{}", digits.trim_end_matches('0'))
        }
    } else {
        let (d0, rest) = digits.split_at(1);
        let rest = rest.trim_end_matches('0');
        if rest.is_empty() {
            format!("{d0}e{exp}")
        } else {
            format!("{d0}.{rest}e{exp}")
        }
    };
    if neg {
        format!("-{body}")
    } else {
        body
    }
}

/// A complex number as `a+bi` / `a-bi` with 17 significant digits.
pub fn fmt_complex(re: f64, im: f64) -> String {
    if im == 0.0 {
        return fmt17(re);
    }
    let sign = if im < 0.0 { '-' } else { '+' };
    format!("{}{}{}i", fmt17(re), sign, fmt17(im.abs()))
}

/// A length that is a simple rational multiple of π (denominator ≤ 12, to
/// 1e-12) as `π`, `2π`, `π/2`, `3π/2`…; others as [`fmt17`].
pub fn pi_multiple(x: f64) -> String {
    let r = x / std::f64::consts::PI;
    for q in 1..=12u32 {
        let p = (r * f64::from(q)).round();
        if (1.0..=1e6).contains(&p) && (r * f64::from(q) - p).abs() <= 1e-12 * p.max(1.0) {
            let g = (1..=q).rev().find(|d| q % d == 0 && p % f64::from(*d) == 0.0).unwrap_or(1);
            let (p, q) = (p / f64::from(g), q / g);
            let head = if p == 1.0 { "π".to_string() } else { format!("{p}π") };
            return if q == 1 { head } else { format!("{head}/{q}") };
        }
    }
    fmt17(x)
}

/// A double as LaTeX: [`fmt17`] with an exponent written `\times 10^{n}`.
pub fn latex17(x: f64) -> String {
    let t = fmt17(x);
    match t.split_once('e') {
        Some((m, e)) => format!("{m}\\times 10^{{{e}}}"),
        None => t,
    }
}

/// A complex number as LaTeX, `a + b\,i` with 17 significant digits.
pub fn latex_complex(re: f64, im: f64) -> String {
    if im == 0.0 {
        return latex17(re);
    }
    let sign = if im < 0.0 { '-' } else { '+' };
    format!("{} {sign} {}\\,i", latex17(re), latex17(im.abs()))
}
