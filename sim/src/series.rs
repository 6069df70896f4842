//! Bounded-memory decimation of a long series for plotting.
//!
//! Keeps every `stride`-th point; when the buffer fills, every other kept point is dropped and
//! the stride doubles. Memory is at most `capacity` points whatever the trace length, and the
//! kept points stay evenly spaced in sample index.

/// A decimating buffer.
#[derive(Debug, Clone)]
pub struct Decimator<T> {
    capacity: usize,
    stride: u64,
    seen: u64,
    points: Vec<T>,
}

impl<T> Decimator<T> {
    /// A buffer of at most `capacity` points (at least 2).
    pub fn new(capacity: usize) -> Self {
        Self {
            capacity: capacity.max(2),
            stride: 1,
            seen: 0,
            points: Vec::new(),
        }
    }

    /// Offer the next point.
    pub fn push(&mut self, p: T) {
        if self.seen.is_multiple_of(self.stride) {
            if self.points.len() >= self.capacity {
                let mut keep = false;
                self.points.retain(|_| {
                    keep = !keep;
                    keep
                });
                self.stride = self.stride.saturating_mul(2);
                if self.seen.is_multiple_of(self.stride) {
                    self.points.push(p);
                }
            } else {
                self.points.push(p);
            }
        }
        self.seen += 1;
    }

    /// The kept points, in order.
    pub fn points(&self) -> &[T] {
        &self.points
    }

    /// Points offered so far.
    pub fn seen(&self) -> u64 {
        self.seen
    }
}

#[cfg(test)]
mod tests {
    #![allow(clippy::indexing_slicing)]
    use super::*;

    #[test]
    fn bounded_and_even() {
        let mut d = Decimator::new(100);
        for i in 0..100_000u64 {
            d.push(i);
        }
        assert!(d.points().len() <= 100);
        assert!(d.points().len() >= 50);
        let steps: Vec<u64> = d.points().windows(2).map(|w| w[1] - w[0]).collect();
        assert!(steps.iter().all(|&s| s == steps[0]), "{steps:?}");
    }
}
