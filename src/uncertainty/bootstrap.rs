//! Seeded resampling. Each replicate draws from its own generator, derived from the run's
//! seed, the series' position and the replicate number, so results do not depend on how
//! rayon schedules the work.

use rand::{Rng, RngExt, SeedableRng};
use rand_chacha::ChaCha8Rng;

/// SplitMix64 finaliser: spreads (seed, series, replicate) over the whole seed space.
fn mix(mut z: u64) -> u64 {
    z = z.wrapping_add(0x9e37_79b9_7f4a_7c15);
    z = (z ^ (z >> 30)).wrapping_mul(0xbf58_476d_1ce4_e5b9);
    z = (z ^ (z >> 27)).wrapping_mul(0x94d0_49bb_1331_11eb);
    z ^ (z >> 31)
}

/// The generator of replicate `replicate` of series `series` under run seed `seed`.
pub fn replicate_rng(seed: u64, series: u64, replicate: u64) -> ChaCha8Rng {
    ChaCha8Rng::seed_from_u64(mix(mix(seed ^ mix(series)) ^ replicate))
}

/// n indices drawn with replacement from 0..n.
pub fn resample_indices(n: usize, rng: &mut impl Rng, out: &mut Vec<usize>) {
    out.clear();
    out.extend((0..n).map(|_| rng.random_range(0..n)));
}

/// The q-quantile (0 ≤ q ≤ 1) of sorted values, by linear interpolation between order
/// statistics (Hyndman & Fan 1996, definition 7, numpy's default).
pub fn percentile(sorted: &[f64], q: f64) -> f64 {
    if sorted.is_empty() {
        return f64::NAN;
    }
    let h = (sorted.len() - 1) as f64 * q.clamp(0.0, 1.0);
    let lo = h.floor() as usize;
    let hi = h.ceil() as usize;
    sorted[lo] + (h - lo as f64) * (sorted[hi] - sorted[lo])
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn replicates_are_reproducible_and_distinct() {
        let draw = |s, r| replicate_rng(42, s, r).random::<u64>();
        assert_eq!(draw(0, 5), draw(0, 5));
        assert_ne!(draw(0, 5), draw(0, 6));
        assert_ne!(draw(0, 5), draw(1, 5));
    }

    #[test]
    fn percentiles_interpolate_like_numpy() {
        // numpy.percentile([1, 2, 3, 4], [25, 50, 90]) = [1.75, 2.5, 3.7] (linear method).
        let v = [1.0, 2.0, 3.0, 4.0];
        assert!((percentile(&v, 0.25) - 1.75).abs() < 1e-12);
        assert!((percentile(&v, 0.5) - 2.5).abs() < 1e-12);
        assert!((percentile(&v, 0.9) - 3.7).abs() < 1e-12);
    }
}
