//! Exact, order-independent summation of `f64` values.
//!
//! Every accumulator in this crate that may be split across slabs or MPI ranks adds its column
//! totals into an [`ExactSum`]. The sum is kept exactly, as a non-overlapping expansion of `f64`
//! partials (Shewchuk 1997, "Adaptive precision floating-point arithmetic and fast robust
//! geometric predicates", Discrete Comput. Geom. 18, 305–363, the grow-expansion algorithm), and
//! rounded once, correctly to nearest-even, when read. The value read therefore depends only on
//! the multiset of values added: any order, any split into parts and any merge tree give the same
//! bits.

use serde::{Deserialize, Serialize};

/// An exact running sum of finite `f64` values, correctly rounded when read.
///
/// Non-finite values are kept apart in an ordinary `f64` sum, so that an infinity or NaN added
/// anywhere shows in the result as IEEE arithmetic would show it. Finite values must stay far
/// below `f64::MAX` in magnitude (sums of volumes \[m³\] and areas \[m²\] do).
///
/// ```
/// use acidscape_analysis::ExactSum;
/// // 1e16 + 1 − 1e16 is 0 in left-to-right f64 arithmetic; the exact sum is 1.
/// let mut s = ExactSum::new();
/// for v in [1e16, 1.0, -1e16] {
///     s.add(v);
/// }
/// assert_eq!(s.value(), 1.0);
/// ```
///
/// Serialised (with serde) as the flat list of [`ExactSum::partials`], e.g. for sending to
/// another process; deserialising adds them back exactly.
#[derive(Clone, Debug, Default, PartialEq, Serialize, Deserialize)]
#[serde(from = "Vec<f64>", into = "Vec<f64>")]
pub struct ExactSum {
    /// Non-overlapping partials, increasing in magnitude; their exact sum is the running sum.
    partials: Vec<f64>,
    /// Sum of the non-finite values added (0 when there were none).
    non_finite: f64,
}

impl ExactSum {
    /// An empty sum (value 0).
    pub fn new() -> Self {
        Self::default()
    }

    /// Adds one value exactly.
    pub fn add(&mut self, value: f64) {
        if !value.is_finite() {
            self.non_finite += value;
            return;
        }
        let mut x = value;
        let mut kept = 0;
        for j in 0..self.partials.len() {
            let mut y = self.partials[j];
            if x.abs() < y.abs() {
                std::mem::swap(&mut x, &mut y);
            }
            let high = x + y;
            let low = y - (high - x);
            if low != 0.0 {
                self.partials[kept] = low;
                kept += 1;
            }
            x = high;
        }
        self.partials.truncate(kept);
        self.partials.push(x);
    }

    /// Adds every value of another sum exactly (merging partial results of slabs or ranks).
    pub fn merge(&mut self, other: &ExactSum) {
        for &p in &other.partials {
            self.add(p);
        }
        self.non_finite += other.non_finite;
    }

    /// The exact sum rounded once to the nearest `f64` (ties to even).
    pub fn value(&self) -> f64 {
        if self.non_finite != 0.0 || self.non_finite.is_nan() {
            return self.non_finite + self.partials.iter().sum::<f64>();
        }
        let p = &self.partials;
        let Some(&top) = p.last() else {
            return 0.0;
        };
        let mut n = p.len() - 1;
        let mut high = top;
        let mut low = 0.0;
        while n > 0 {
            let x = high;
            let y = p[n - 1];
            n -= 1;
            high = x + y;
            low = y - (high - x);
            if low != 0.0 {
                break;
            }
        }
        // Round half to even across the remaining partials: if the discarded part `low` is
        // exactly half an ulp and the next partial pushes the same way, round away.
        if n > 0 && ((low < 0.0 && p[n - 1] < 0.0) || (low > 0.0 && p[n - 1] > 0.0)) {
            let y = low * 2.0;
            let x = high + y;
            if y == x - high {
                high = x;
            }
        }
        high
    }

    /// The partials of the expansion (for sending to another process); adding them to an empty
    /// sum with [`ExactSum::from_partials`] rebuilds an equal sum.
    pub fn partials(&self) -> Vec<f64> {
        let mut out = self.partials.clone();
        if self.non_finite != 0.0 || self.non_finite.is_nan() {
            out.push(self.non_finite);
        }
        out
    }

    /// A sum of the given values (e.g. partials received from another process).
    pub fn from_partials(values: &[f64]) -> Self {
        let mut sum = ExactSum::new();
        for &v in values {
            sum.add(v);
        }
        sum
    }
}

/// Appends sums to one flat list of numbers (each sum's count of partials, then its
/// partials), e.g. to send to another process; [`merge_flat`] adds such a list back exactly.
pub fn append_flat<'a>(sums: impl Iterator<Item = &'a ExactSum>, flat: &mut Vec<f64>) {
    for sum in sums {
        let partials = sum.partials();
        flat.push(partials.len() as f64);
        flat.extend(partials);
    }
}

/// Adds a flat list of [`append_flat`] to the same sums in the same order; `None` when the
/// list does not fit them (a count out of place, too short or too long).
pub fn merge_flat<'a>(sums: impl Iterator<Item = &'a mut ExactSum>, flat: &[f64]) -> Option<()> {
    let mut rest = flat;
    for sum in sums {
        let (&count, tail) = rest.split_first()?;
        if !(0.0..=tail.len() as f64).contains(&count) || count.fract() != 0.0 {
            return None;
        }
        let count = count as usize;
        sum.merge(&ExactSum::from_partials(&tail[..count]));
        rest = &tail[count..];
    }
    rest.is_empty().then_some(())
}

impl From<Vec<f64>> for ExactSum {
    fn from(partials: Vec<f64>) -> Self {
        ExactSum::from_partials(&partials)
    }
}

impl From<ExactSum> for Vec<f64> {
    fn from(sum: ExactSum) -> Self {
        sum.partials()
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use proptest::prelude::*;

    /// Values k · 2^-20 with |k| < 2^50: their exact sum is an i128 multiple of 2^-20, so the
    /// correctly rounded reference is `(Σ k) as f64 · 2^-20` (Rust's integer-to-float cast rounds
    /// to nearest, ties to even; the power-of-two scaling is exact).
    fn reference_sum(ks: &[i64]) -> f64 {
        let total: i128 = ks.iter().map(|&k| k as i128).sum();
        total as f64 * 2f64.powi(-20)
    }

    fn values(ks: &[i64]) -> Vec<f64> {
        ks.iter().map(|&k| k as f64 * 2f64.powi(-20)).collect()
    }

    #[test]
    fn empty_sum_is_zero() {
        assert_eq!(ExactSum::new().value(), 0.0);
    }

    #[test]
    fn cancellation_that_plain_summation_loses() {
        // 1e16 + 1 - 1e16 is 0 in left-to-right f64 arithmetic; the exact sum is 1.
        let mut s = ExactSum::new();
        for v in [1e16, 1.0, -1e16] {
            s.add(v);
        }
        assert_eq!(s.value(), 1.0);
        assert_eq!(1e16 + 1.0 - 1e16, 0.0);
    }

    #[test]
    fn rounds_half_to_even_across_partials() {
        // 1 + 2^-53 + 2^-106: the exact sum lies just above the half-way point between 1 and
        // 1 + 2^-52, so the correctly rounded value is 1 + 2^-52 (IEEE 754 round to nearest).
        let mut s = ExactSum::new();
        for v in [1.0, 2f64.powi(-53), 2f64.powi(-106)] {
            s.add(v);
        }
        assert_eq!(s.value(), 1.0 + 2f64.powi(-52));
        // Exactly half-way (no third term): ties go to the even neighbour, 1.
        let mut t = ExactSum::new();
        t.add(1.0);
        t.add(2f64.powi(-53));
        assert_eq!(t.value(), 1.0);
    }

    #[test]
    fn non_finite_values_propagate() {
        let mut s = ExactSum::new();
        s.add(1.0);
        s.add(f64::INFINITY);
        assert_eq!(s.value(), f64::INFINITY);
        s.add(f64::NEG_INFINITY);
        assert!(s.value().is_nan());
        assert!(ExactSum::from_partials(&s.partials()).value().is_nan());
    }

    proptest! {
        #[test]
        fn equals_integer_reference(ks in prop::collection::vec(-(1i64 << 50)..(1i64 << 50), 0..60)) {
            let mut s = ExactSum::new();
            for v in values(&ks) {
                s.add(v);
            }
            prop_assert_eq!(s.value().to_bits(), reference_sum(&ks).to_bits());
        }

        #[test]
        fn any_split_and_merge_order_gives_the_same_bits(
            ks in prop::collection::vec(-(1i64 << 50)..(1i64 << 50), 1..60),
            cut in 0usize..60,
            seed in 0u64..1000,
        ) {
            let vs = values(&ks);
            let cut = cut.min(vs.len());
            let (left, right) = vs.split_at(cut);
            let mut a = ExactSum::from_partials(left);
            let b = ExactSum::from_partials(right);
            a.merge(&b);
            let mut c = ExactSum::from_partials(right);
            c.merge(&ExactSum::from_partials(left));
            // A deterministic shuffle.
            let mut shuffled = vs.clone();
            let mut state = seed.wrapping_mul(6364136223846793005).wrapping_add(1);
            for i in (1..shuffled.len()).rev() {
                state = state.wrapping_mul(6364136223846793005).wrapping_add(1442695040888963407);
                shuffled.swap(i, (state >> 33) as usize % (i + 1));
            }
            let d = ExactSum::from_partials(&shuffled);
            let e = ExactSum::from_partials(&a.partials());
            let expected = reference_sum(&ks).to_bits();
            for got in [a.value(), c.value(), d.value(), e.value()] {
                prop_assert_eq!(got.to_bits(), expected);
            }
        }
    }
}
