//! Numbers in the JSON reports: serde_json writes a non-finite f64 (a statistic that does not
//! exist for a degenerate fit) as `null`; [`nan_if_null`] reads that `null` back as NaN, so
//! that every report reads back through its own types.

/// Deserialises an f64 written by serde_json: a number, or `null` for a non-finite value
/// (read as NaN).
pub fn nan_if_null<'de, D: serde::Deserializer<'de>>(deserializer: D) -> Result<f64, D::Error> {
    Ok(<Option<f64> as serde::Deserialize>::deserialize(deserializer)?.unwrap_or(f64::NAN))
}
