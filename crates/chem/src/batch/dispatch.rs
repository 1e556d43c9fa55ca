//! Picks the widest instruction set the CPU offers, at run time. The lane code is compiled for
//! the baseline of the target (SSE2 on x86-64, NEON on aarch64: two doubles a register; lanes of
//! eight cells) and, on x86-64, again for AVX2 with FMA (four doubles a register; lanes of 16
//! cells) and for AVX-512 (eight doubles a register; lanes of eight cells). Lane widths are what
//! measured fastest here: a lane of several registers gives the processor independent work while
//! divisions and square roots are in flight, until registers run out. Fused multiply-adds (in
//! `exp` and `ln` only) are used where the instruction set guarantees them: AVX2 with FMA,
//! AVX-512, and aarch64's baseline.

use super::{solve_group, CellInputs, CellOutputs, LANE_ITERATION_BUDGET};
use crate::ConstantChoice;

/// Solves every cell with the best instruction set available.
pub(super) fn solve_lanes(
    inputs: &CellInputs<'_>,
    choice: &ConstantChoice,
    outputs: &mut CellOutputs<'_>,
) {
    #[cfg(target_arch = "x86_64")]
    {
        if std::arch::is_x86_feature_detected!("avx512f") {
            // SAFETY: the CPU has AVX-512F, checked just above.
            unsafe { solve_lanes_avx512(inputs, choice, outputs) };
            return;
        }
        if std::arch::is_x86_feature_detected!("avx2") && std::arch::is_x86_feature_detected!("fma")
        {
            // SAFETY: the CPU has AVX2 and FMA, checked just above.
            unsafe { solve_lanes_avx2(inputs, choice, outputs) };
            return;
        }
    }
    solve_lanes_baseline(inputs, choice, outputs);
}

/// A copy of the lane code compiled for an x86-64 instruction set beyond the baseline.
macro_rules! x86_copy {
    ($name:ident, $features:literal, $width:literal, $what:literal) => {
        #[doc = concat!("The lane code compiled for ", $what, ".")]
        ///
        /// # Safety
        /// The CPU must support every feature this function enables.
        #[cfg(target_arch = "x86_64")]
        #[target_feature(enable = $features)]
        pub(super) unsafe fn $name(
            inputs: &CellInputs<'_>,
            choice: &ConstantChoice,
            outputs: &mut CellOutputs<'_>,
        ) {
            every_group::<$width, true>(inputs, choice, outputs);
        }
    };
}

x86_copy!(
    solve_lanes_avx512,
    "avx512f,avx2,fma",
    8,
    "AVX-512 (eight doubles a register)"
);
x86_copy!(
    solve_lanes_avx2,
    "avx2,fma",
    16,
    "AVX2 and FMA (four doubles a register)"
);

/// Whether the target's baseline guarantees fused multiply-adds (aarch64 does).
const BASELINE_FUSED: bool = cfg!(target_arch = "aarch64");

/// The lane code compiled for the target's baseline.
pub(super) fn solve_lanes_baseline(
    inputs: &CellInputs<'_>,
    choice: &ConstantChoice,
    outputs: &mut CellOutputs<'_>,
) {
    every_group::<8, BASELINE_FUSED>(inputs, choice, outputs);
}

#[inline(always)]
fn every_group<const N: usize, const FUSED: bool>(
    inputs: &CellInputs<'_>,
    choice: &ConstantChoice,
    outputs: &mut CellOutputs<'_>,
) {
    let cells = inputs.temperature_c.len();
    for first in (0..cells).step_by(N) {
        let count = (cells - first).min(N);
        solve_group::<N, FUSED>(inputs, choice, outputs, first, count, LANE_ITERATION_BUDGET);
    }
}
