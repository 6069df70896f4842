//! A streaming quantile sketch with bounded memory: a log-bucketed histogram of magnitudes
//! (the scheme of DDSketch [pub: Masson, Rim & Lee, "DDSketch: a fast and fully-mergeable
//! quantile sketch with relative-error guarantees", PVLDB 12(12), 2019]).
//!
//! Bucket k holds values in (x₀·γ^(k−1), x₀·γ^k] with γ = (1+α)/(1−α), α = 0.5 %; a quantile
//! is reported as the bucket's midpoint 2·x₀·γ^k/(γ+1), within relative error α of the exact
//! rank value for every value above x₀ = 10⁻⁶; values at or below x₀ are counted as x₀. Memory
//! is a fixed ≈ 28 KB array for values up to 10⁹, whatever the number of samples.

/// Relative accuracy of [`QuantileSketch::quantile`].
pub const RELATIVE_ACCURACY: f64 = 0.005;
const X0: f64 = 1e-6;
const X_MAX: f64 = 1e9;

/// Log-bucketed histogram of non-negative values.
#[derive(Debug, Clone)]
pub struct QuantileSketch {
    counts: Vec<u64>,
    ln_gamma: f64,
    gamma: f64,
    n: u64,
}

impl Default for QuantileSketch {
    fn default() -> Self {
        Self::new()
    }
}

impl QuantileSketch {
    /// An empty sketch.
    pub fn new() -> Self {
        let gamma = (1.0 + RELATIVE_ACCURACY) / (1.0 - RELATIVE_ACCURACY);
        let ln_gamma = libm::log(gamma);
        // A few thousand buckets: small, positive, exact.
        #[allow(clippy::cast_possible_truncation, clippy::cast_sign_loss)]
        let buckets = (libm::log(X_MAX / X0) / ln_gamma).ceil() as usize + 2;
        Self {
            counts: vec![0; buckets],
            ln_gamma,
            gamma,
            n: 0,
        }
    }

    /// Add |x|.
    pub fn add(&mut self, x: f64) {
        let x = x.abs();
        let k = if x <= X0 {
            0
        } else {
            // Non-negative and bounded by the clamp below.
            #[allow(clippy::cast_possible_truncation, clippy::cast_sign_loss)]
            let k = (libm::log(x / X0) / self.ln_gamma).ceil().max(0.0) as usize;
            k.min(self.counts.len() - 1)
        };
        if let Some(c) = self.counts.get_mut(k) {
            *c += 1;
        }
        self.n += 1;
    }

    /// Number of values added.
    pub fn count(&self) -> u64 {
        self.n
    }

    /// Count every value of `other` too: both sketches have the same buckets, so the merged
    /// sketch is the one that would have seen all the values (merging is exact).
    pub fn merge(&mut self, other: &Self) {
        for (c, o) in self.counts.iter_mut().zip(&other.counts) {
            *c += o;
        }
        self.n += other.n;
    }

    /// The count of each bucket, in bucket order (for serialising a sketch).
    pub fn bucket_counts(&self) -> &[u64] {
        &self.counts
    }

    /// A sketch holding `counts` (as [`QuantileSketch::bucket_counts`] gave them); `None`
    /// when their number is not this sketch's number of buckets.
    pub fn from_bucket_counts(counts: &[u64]) -> Option<Self> {
        let mut s = Self::new();
        if counts.len() != s.counts.len() {
            return None;
        }
        s.counts.copy_from_slice(counts);
        s.n = counts.iter().sum();
        Some(s)
    }

    /// The q-quantile (0 ≤ q ≤ 1) of the magnitudes, by the lower-rank convention
    /// (rank ⌊q·(n−1)⌋ of the sorted values); `None` when empty.
    pub fn quantile(&self, q: f64) -> Option<f64> {
        if self.n == 0 {
            return None;
        }
        // Ranks are below 2⁵³ for any practical trace.
        #[allow(
            clippy::cast_precision_loss,
            clippy::cast_possible_truncation,
            clippy::cast_sign_loss
        )]
        let rank = (q.clamp(0.0, 1.0) * (self.n - 1) as f64).floor() as u64;
        let mut seen = 0u64;
        for (k, &c) in self.counts.iter().enumerate() {
            seen += c;
            if seen > rank {
                if k == 0 {
                    return Some(X0);
                }
                let k = i32::try_from(k).unwrap_or(i32::MAX);
                return Some(
                    2.0 * X0 * crate::portable_math::powi(self.gamma, k) / (self.gamma + 1.0),
                );
            }
        }
        None
    }
}

#[cfg(test)]
mod tests {
    #![allow(
        clippy::unwrap_used,
        clippy::indexing_slicing,
        clippy::cast_possible_truncation,
        clippy::cast_sign_loss,
        clippy::cast_precision_loss
    )]
    use super::*;

    #[test]
    fn quantiles_within_relative_accuracy() {
        // Against the exact order statistics of a known set: 1 … 100 000 scaled by 0.01.
        let mut s = QuantileSketch::new();
        let xs: Vec<f64> = (1..=100_000).map(|i| f64::from(i) * 0.01).collect();
        for &x in xs.iter().rev() {
            s.add(-x);
        }
        for q in [0.0, 0.5, 0.95, 0.99, 1.0] {
            let exact = xs[(q * (xs.len() - 1) as f64).floor() as usize];
            let got = s.quantile(q).unwrap();
            assert!(
                (got - exact).abs() <= RELATIVE_ACCURACY * exact * 1.0001,
                "q={q}: {got} vs {exact}"
            );
        }
        assert_eq!(QuantileSketch::new().quantile(0.5), None);
    }

    #[test]
    fn merged_sketch_is_the_sketch_of_all_values() {
        // [calc] bucket counts add: two halves merged give the sketch of the whole set, and the
        // counts round-trip through `bucket_counts`.
        let xs: Vec<f64> = (1..=10_000).map(|i| f64::from(i) * 0.37).collect();
        let (mut whole, mut a, mut b) = (
            QuantileSketch::new(),
            QuantileSketch::new(),
            QuantileSketch::new(),
        );
        for (i, &x) in xs.iter().enumerate() {
            whole.add(x);
            if i % 3 == 0 { a.add(x) } else { b.add(x) }
        }
        a.merge(&b);
        let back = QuantileSketch::from_bucket_counts(a.bucket_counts()).unwrap();
        for q in [0.0, 0.5, 0.95, 0.99, 1.0] {
            assert_eq!(back.quantile(q), whole.quantile(q));
        }
        assert_eq!(back.count(), 10_000);
        assert!(QuantileSketch::from_bucket_counts(&[1, 2]).is_none());
    }
}
