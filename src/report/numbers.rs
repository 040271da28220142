//! Numbers set for people: a value with its SE, "(−1.366 ± 0.065) × 10⁻⁴", with a real minus
//! sign (U+2212) and superscript exponents; the JSON and CSV keep plain numbers.

/// 10^e written with superscript digits, e.g. "10⁻⁴".
pub fn superscript(e: i32) -> String {
    let digits: String = e
        .to_string()
        .chars()
        .map(|c| match c {
            '-' => '⁻',
            '0' => '⁰',
            '1' => '¹',
            '2' => '²',
            '3' => '³',
            '4' => '⁴',
            '5' => '⁵',
            '6' => '⁶',
            '7' => '⁷',
            '8' => '⁸',
            _ => '⁹',
        })
        .collect();
    format!("10{digits}")
}

/// A hyphen-minus replaced by the minus sign U+2212.
pub fn minus(text: String) -> String {
    if text.contains('-') {
        text.replace('-', "−")
    } else {
        text
    }
}

/// A number alone, for an SE that is zero, missing or not finite: four significant figures,
/// "∞", "−∞", or "—" for NaN.
fn alone(value: f64) -> String {
    if value.is_nan() {
        return "—".into();
    }
    if value.is_infinite() {
        return if value > 0.0 { "∞".into() } else { "−∞".into() };
    }
    if value == 0.0 {
        return "0".into();
    }
    let exponent = value.abs().log10().floor() as i32;
    if (-2..5).contains(&exponent) {
        let places = (3 - exponent).clamp(0, 6) as usize;
        minus(format!("{value:.places$}"))
    } else {
        minus(format!("{:.3} × {}", value / 10f64.powi(exponent), superscript(exponent)))
    }
}

/// `value ± se` with the SE to two significant figures and the value to match; outside
/// 10⁻² … 10⁵ as "(v ± s) × 10ⁿ". A zero, missing or non-finite SE prints the value alone
/// followed by "± —".
pub fn plus_minus(value: f64, se: f64) -> String {
    if !(se.is_finite() && se > 0.0 && value.is_finite()) {
        return format!("{} ± —", alone(value));
    }
    // Both are finite and se > 0, so the exponents lie within ±324.
    let exponent = value.abs().max(se).log10().floor() as i32;
    let se_exponent = se.log10().floor() as i32;
    // Two significant figures of the SE, but never more than 6 decimals of mantissa: an SE
    // many orders below the value (noise-free data) would otherwise print 17 digits.
    let decimals = (exponent - se_exponent + 1).clamp(0, 6) as usize;
    if (-2..5).contains(&exponent) {
        let places = (1 - se_exponent).clamp(0, 6 - exponent.min(0)) as usize;
        minus(format!("{value:.places$} ± {se:.places$}"))
    } else {
        let scale = 10f64.powi(exponent);
        minus(format!("({:.decimals$} ± {:.decimals$}) × {}", value / scale, se / scale, superscript(exponent)))
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn values_are_set_with_a_minus_sign_and_superscripts() {
        assert_eq!(plus_minus(-1.366e-4, 0.065e-4), "(−1.366 ± 0.065) × 10⁻⁴");
        assert_eq!(plus_minus(1.858e5, 0.018e5), "(1.858 ± 0.018) × 10⁵");
        assert_eq!(plus_minus(-0.39, 0.07), "−0.390 ± 0.070");
        assert_eq!(plus_minus(0.0, 0.5), "0.00 ± 0.50");
        assert_eq!(plus_minus(2.5, 0.0), "2.500 ± —");
        assert_eq!(plus_minus(f64::INFINITY, 1.0), "∞ ± —");
        assert_eq!(plus_minus(f64::NEG_INFINITY, f64::NAN), "−∞ ± —");
        assert_eq!(plus_minus(f64::NAN, 1.0), "— ± —");
        assert_eq!(plus_minus(0.0, 0.0), "0 ± —");
        assert_eq!(plus_minus(-3.2e-7, 0.0), "−3.200 × 10⁻⁷ ± —");
        assert_eq!(superscript(-12), "10⁻¹²");
    }

    #[test]
    fn values_are_rounded_to_their_standard_error() {
        assert_eq!(plus_minus(152345.6, 2345.0), "(1.523 ± 0.023) × 10⁵");
        assert_eq!(plus_minus(1.234e-4, 5.6e-6), "(1.234 ± 0.056) × 10⁻⁴");
        assert_eq!(plus_minus(12.346, 0.12), "12.35 ± 0.12");
        assert_eq!(plus_minus(499_999.985, 1e-9), "(5.000000 ± 0.000000) × 10⁵");
    }

    #[test]
    fn fuzz_found_plus_minus_overflowed_on_an_infinite_value() {
        // tests/suite/fuzz.rs: an infinite A2 made `exponent − se_exponent` overflow i32.
        assert_eq!(plus_minus(f64::INFINITY, 1e-3), "∞ ± —");
        assert_eq!(plus_minus(f64::NAN, 1.0), "— ± —");
        assert!(plus_minus(1e300, 1e-300).starts_with("(1.000000 ± 0.000000) × 10³⁰⁰"));
    }
}
