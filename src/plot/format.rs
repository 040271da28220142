//! Numbers for people: tick labels with only the digits the spacing needs, and a power of ten
//! that axis labels state instead of long decimals.

/// The exponent e such that values up to `max_abs` read as 1–999 after dividing by 10^e, in
/// steps of 3 where that keeps them readable (0 for values already in 0.01–9999).
pub fn power_of_ten(max_abs: f64) -> i32 {
    if !(max_abs.is_finite() && max_abs > 0.0) {
        return 0;
    }
    let e = max_abs.log10().floor() as i32;
    if (-2..4).contains(&e) {
        0
    } else {
        e
    }
}

/// A drawable axis range from any two numbers: non-finite ends become a default, ends too close
/// to tell apart at f64 precision are spread, and magnitudes are kept below 10³⁰⁰. Plotters
/// loops forever placing ticks on an empty or non-finite range, so every chart passes its
/// ranges through here.
pub fn axis(lo: f64, hi: f64) -> (f64, f64) {
    const LIMIT: f64 = 1e300;
    let (lo, hi) = match (lo.is_finite(), hi.is_finite()) {
        (true, true) => (lo.min(hi).clamp(-LIMIT, LIMIT), hi.max(lo).clamp(-LIMIT, LIMIT)),
        (true, false) => (lo.clamp(-LIMIT, LIMIT), lo.clamp(-LIMIT, LIMIT)),
        (false, true) => (hi.clamp(-LIMIT, LIMIT), hi.clamp(-LIMIT, LIMIT)),
        (false, false) => (0.0, 1.0),
    };
    let mid = 0.5 * lo + 0.5 * hi;
    let min_width = (mid.abs() * 1e-9).max(1e-12);
    if hi - lo >= min_width {
        (lo, hi)
    } else {
        (mid - min_width.max(mid.abs() * 0.05), mid + min_width.max(mid.abs() * 0.05))
    }
}

pub use crate::report::superscript;

/// A tick label for `value` on an axis spanning `span`: as many decimals as ~5 ticks need.
pub fn tick(value: f64, span: f64) -> String {
    let step = span.abs() / 5.0;
    let decimals = if step > 0.0 && step.is_finite() { (-step.log10().floor()).max(0.0) as usize } else { 0 };
    let text = format!("{value:.decimals$}");
    // "-0" and "-0.00" read as zero.
    if text.trim_start_matches('-').chars().all(|c| c == '0' || c == '.') {
        text.trim_start_matches('-').to_string()
    } else {
        text
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn ticks_and_powers_are_short() {
        assert_eq!(power_of_ten(1.4e-4), -4);
        assert_eq!(power_of_ten(305.0), 0);
        assert_eq!(superscript(-4), "10⁻⁴");
        assert_eq!(tick(0.30000000000000004, 1.0), "0.3");
        assert_eq!(tick(-0.0001, 1.0), "0.0");
        assert_eq!(tick(305.0, 40.0), "305");
        assert_eq!(axis(f64::NAN, f64::INFINITY), (0.0, 1.0));
        let (lo, hi) = axis(1e10, 1e10);
        assert!(hi > lo && hi - lo > 1e8);
        let (lo, hi) = axis(0.0, 0.0);
        assert!(hi > lo);
        assert_eq!(axis(2.0, 1.0), (1.0, 2.0));
    }
}
