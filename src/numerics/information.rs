//! One information criterion for every model choice: the small-sample corrected Akaike
//! criterion (Hurvich & Tsai 1989, Biometrika 76, 297–307).

/// AICc = n ln(RSS/n) + 2k + 2k(k+1)/(n−k−1), k = p + 1 (σ counted). `None` when n − k − 1 ≤ 0.
pub fn aicc(rss: f64, n: usize, p: usize) -> Option<f64> {
    let k = (p + 1) as f64;
    let n_f = n as f64;
    (n_f - k - 1.0 > 0.0)
        .then(|| n_f * (rss.max(f64::MIN_POSITIVE) / n_f).ln() + 2.0 * k + 2.0 * k * (k + 1.0) / (n_f - k - 1.0))
}
