//! Number formatting shared by the plain-language verdicts and findings.

/// A share as a whole percentage without the sign: 0.583 → "58".
pub(crate) fn pct(x: f64) -> String {
    format!("{:.0}", 100.0 * x)
}

/// A share as a percentage with one decimal when it is small (below 10 %): 0.042 → "4.2".
pub(crate) fn pct_fine(x: f64) -> String {
    if x.abs() < 0.1 {
        format!("{:.1}", 100.0 * x)
    } else {
        pct(x)
    }
}

/// A p-value for a sentence: three significant decimals, or "< 0.001".
pub(crate) fn p_value(p: f64) -> String {
    if p < 0.001 {
        "p < 0.001".into()
    } else {
        format!("p = {p:.3}")
    }
}

/// A number with at most one decimal, dropping a trailing ".0" and writing a true minus
/// sign (so "−13–14" reads as a range): 12.0 → "12", −2.45 → "−2.5".
pub(crate) fn num(x: f64) -> String {
    let r = (x * 10.0).round() / 10.0;
    let text = if r.fract() == 0.0 {
        format!("{:.0}", r.abs())
    } else {
        format!("{:.1}", r.abs())
    };
    if r < 0.0 { format!("−{text}") } else { text }
}

/// A number with two decimals and a true minus sign (for chances and swings).
pub(crate) fn num2(x: f64) -> String {
    let text = format!("{:.2}", x.abs());
    if x < 0.0 && text != "0.00" {
        format!("−{text}")
    } else {
        text
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn numbers_read_as_written_by_hand() {
        assert_eq!(num(12.0), "12");
        assert_eq!(num(-13.14), "−13.1");
        assert_eq!(num(-0.01), "0");
        assert_eq!(num2(-0.004), "0.00");
        assert_eq!(num2(-0.3), "−0.30");
        assert_eq!(pct(0.583), "58");
        assert_eq!(pct_fine(0.042), "4.2");
        assert_eq!(p_value(0.0004), "p < 0.001");
        assert_eq!(p_value(0.41), "p = 0.410");
    }
}
