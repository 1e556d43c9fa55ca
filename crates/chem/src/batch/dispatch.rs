//! Picks the widest instruction set the CPU offers, at run time. The lane code (always lanes of
//! [`LANE_WIDTH`] cells) is compiled for the baseline of the target (SSE2 on x86-64, NEON on
//! aarch64: two doubles a register) and, on x86-64, again for AVX2 with FMA and for AVX-512 (four
//! and eight doubles a register; these two use fused multiply-adds in `exp` and `ln`).

use super::{solve_group, CellInputs, CellOutputs, LANE_ITERATION_BUDGET, LANE_WIDTH};
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
    ($name:ident, $features:literal, $what:literal) => {
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
            every_group::<true>(inputs, choice, outputs);
        }
    };
}

x86_copy!(
    solve_lanes_avx512,
    "avx512f,avx2,fma",
    "AVX-512 (eight doubles a register)"
);
x86_copy!(
    solve_lanes_avx2,
    "avx2,fma",
    "AVX2 and FMA (four doubles a register)"
);

/// The lane code compiled for the target's baseline.
pub(super) fn solve_lanes_baseline(
    inputs: &CellInputs<'_>,
    choice: &ConstantChoice,
    outputs: &mut CellOutputs<'_>,
) {
    every_group::<false>(inputs, choice, outputs);
}

#[inline(always)]
fn every_group<const FUSED: bool>(
    inputs: &CellInputs<'_>,
    choice: &ConstantChoice,
    outputs: &mut CellOutputs<'_>,
) {
    let cells = inputs.temperature_c.len();
    for first in (0..cells).step_by(LANE_WIDTH) {
        let count = (cells - first).min(LANE_WIDTH);
        solve_group::<LANE_WIDTH, FUSED>(
            inputs,
            choice,
            outputs,
            first,
            count,
            LANE_ITERATION_BUDGET,
        );
    }
}
