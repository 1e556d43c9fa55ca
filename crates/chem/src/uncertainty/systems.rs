//! The acid-base systems of the alkalinity equation as distributions over their species, whose
//! moments are the derivatives that the implicit differentiation needs.
//!
//! Within one system the fraction of species i is αi ∝ h^mi · Π Kj^kij (for carbonate: CO2* ∝ h²,
//! HCO3- ∝ K1·h, CO3-- ∝ K1·K2), an exponential family in ln h and ln Kj. Its alkalinity per unit
//! total is the mean c̄ of each species' alkalinity coefficient ci, and so (common practice for
//! exponential families):
//! ∂c̄/∂ln x = Cov(c, x) and ∂²c̄/∂ln x ∂ln y = E[(c - c̄)(x - x̄)(y - ȳ)].

/// A quantity and its derivatives in ln h and in the ln of each of K constants.
#[derive(Clone, Copy, Debug)]
pub(crate) struct Level<const K: usize> {
    pub value: f64,
    pub by_h: f64,
    pub by_k: [f64; K],
}

/// The moments of one system at the solution: level 0 is c̄ with ∂c̄/∂ln h = Cov(c, m) and
/// ∂c̄/∂ln Kj = Cov(c, kj); level 1 is ∂c̄/∂ln h with ∂²c̄/∂(ln h)² = E[(c - c̄)(m - m̄)²] and
/// ∂²c̄/∂ln h ∂ln Kj = E[(c - c̄)(m - m̄)(kj - k̄j)].
#[derive(Clone, Copy, Debug)]
pub(crate) struct Moments<const K: usize> {
    pub levels: [Level<K>; 2],
}

/// Moments of a system of N species from their fractions (summing to one), alkalinity
/// coefficients, powers of \[H+\] and powers of each of the K constants.
#[inline(always)]
#[allow(clippy::needless_range_loop)] // parallel arrays over species and constants
fn moments<const N: usize, const K: usize>(
    fractions: [f64; N],
    coefficients: [f64; N],
    h_powers: [f64; N],
    k_powers: [[f64; N]; K],
) -> Moments<K> {
    let (mut mean, mut h_mean, mut k_mean) = (0.0, 0.0, [0.0; K]);
    for i in 0..N {
        mean += fractions[i] * coefficients[i];
        h_mean += fractions[i] * h_powers[i];
        for j in 0..K {
            k_mean[j] += fractions[i] * k_powers[j][i];
        }
    }
    let blank = Level {
        value: 0.0,
        by_h: 0.0,
        by_k: [0.0; K],
    };
    let [mut first, mut second] = [blank; 2];
    for i in 0..N {
        let weight = fractions[i] * (coefficients[i] - mean);
        let dh = h_powers[i] - h_mean;
        first.by_h += weight * dh;
        second.by_h += weight * dh * dh;
        for j in 0..K {
            let dk = k_powers[j][i] - k_mean[j];
            first.by_k[j] += weight * dk;
            second.by_k[j] += weight * dh * dk;
        }
    }
    first.value = mean;
    second.value = first.by_h;
    Moments {
        levels: [first, second],
    }
}

/// Carbonate: CO2*, HCO3-, CO3-- with alkalinity coefficients 0, 1, 2; constants K1, K2.
pub(crate) fn carbonate(h: f64, k1: f64, k2: f64) -> Moments<2> {
    let inv = 1.0 / (h * h + k1 * h + k1 * k2);
    moments(
        [h * h * inv, k1 * h * inv, k1 * k2 * inv],
        [0.0, 1.0, 2.0],
        [2.0, 1.0, 0.0],
        [[0.0, 1.0, 1.0], [0.0, 0.0, 1.0]],
    )
}

/// Phosphate: H3PO4, H2PO4-, HPO4--, PO4--- with coefficients -1, 0, 1, 2 (Dickson 1981);
/// constants K1P, K2P, K3P.
pub(crate) fn phosphate(h: f64, k1p: f64, k2p: f64, k3p: f64) -> Moments<3> {
    let (p1, p12, p123) = (k1p, k1p * k2p, k1p * k2p * k3p);
    let h2 = h * h;
    let inv = 1.0 / (h2 * h + p1 * h2 + p12 * h + p123);
    moments(
        [h2 * h * inv, p1 * h2 * inv, p12 * h * inv, p123 * inv],
        [-1.0, 0.0, 1.0, 2.0],
        [3.0, 2.0, 1.0, 0.0],
        [
            [0.0, 1.0, 1.0, 1.0],
            [0.0, 0.0, 1.0, 1.0],
            [0.0, 0.0, 0.0, 1.0],
        ],
    )
}

/// A monoprotic acid HA ⇌ H+ + A- with constant `k`, whose acid form counts `acid_coefficient`
/// and base form `acid_coefficient + 1` in alkalinity: borate and silicate (0, 1), hydrogen
/// sulfate and hydrogen fluoride (-1, 0).
pub(crate) fn monoprotic(h: f64, k: f64, acid_coefficient: f64) -> Moments<1> {
    let inv = 1.0 / (h + k);
    moments(
        [h * inv, k * inv],
        [acid_coefficient, acid_coefficient + 1.0],
        [1.0, 0.0],
        [[0.0, 1.0]],
    )
}

#[cfg(test)]
mod tests {
    use super::*;

    /// The moments against central differences of the mean coefficient itself (relative step
    /// 1e-4 in ln x: truncation ~1e-8 relative, round-off ~1e-12).
    #[test]
    fn moments_are_the_derivatives_of_the_mean() {
        let (h, k1, k2): (f64, f64, f64) = (8e-9, 1.4e-6, 1.1e-9);
        let step = 1e-4;
        let mean = |lh: f64, l1: f64, l2: f64| carbonate(lh.exp(), l1.exp(), l2.exp()).levels;
        let (lh, l1, l2) = (h.ln(), k1.ln(), k2.ln());
        let at = mean(lh, l1, l2);
        let value = |l: [Level<2>; 2], level: usize| l[level].value;
        let by_h =
            (value(mean(lh + step, l1, l2), 0) - value(mean(lh - step, l1, l2), 0)) / (2.0 * step);
        let by_k2 =
            (value(mean(lh, l1, l2 + step), 0) - value(mean(lh, l1, l2 - step), 0)) / (2.0 * step);
        let by_h_h =
            (value(mean(lh + step, l1, l2), 1) - value(mean(lh - step, l1, l2), 1)) / (2.0 * step);
        let by_h_k1 =
            (value(mean(lh, l1 + step, l2), 1) - value(mean(lh, l1 - step, l2), 1)) / (2.0 * step);
        for (got, expected) in [
            (at[0].by_h, by_h),
            (at[0].by_k[1], by_k2),
            (at[1].by_h, by_h_h),
            (at[1].by_k[0], by_h_k1),
        ] {
            assert!(
                ((got - expected) / expected).abs() < 1e-7,
                "{got} vs {expected}"
            );
        }
        // Two-species closed forms: Cov(c, k) = p(1 - p) for the base fraction p (common practice).
        let m = monoprotic(1e-8, 2.5e-9, 0.0);
        let p = 2.5e-9 / (1e-8 + 2.5e-9);
        assert!((m.levels[0].by_k[0] - p * (1.0 - p)).abs() < 1e-15);
        assert!((m.levels[0].value - p).abs() < 1e-15);
    }
}
