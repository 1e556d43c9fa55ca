//! Cells side by side in SIMD lanes: a function written for N cells (`[f64; N]` in and out,
//! the same arithmetic on each) is compiled again for the widest registers the CPU offers and
//! picked at run time. No fused multiply-adds are enabled, so every copy gives the bits of the
//! scalar arithmetic (tested where it is used).

/// Calls `$each(args…)` — an `#[inline(always)]` function over `&[f64; N]` arguments returning
/// `[f64; N]` — compiled for AVX-512 or AVX2 when the CPU has them, else for the baseline.
macro_rules! widest_lanes {
    ($each:ident, $($arg:ident),+) => {{
        #[cfg(target_arch = "x86_64")]
        {
            /// `$each` compiled for AVX-512 (eight doubles a register).
            ///
            /// # Safety
            /// The CPU must support AVX-512F.
            #[target_feature(enable = "avx512f,avx2")]
            unsafe fn avx512<const N: usize>($($arg: &[f64; N]),+) -> [f64; N] {
                $each($($arg),+)
            }
            /// `$each` compiled for AVX2 (four doubles a register).
            ///
            /// # Safety
            /// The CPU must support AVX2.
            #[target_feature(enable = "avx2")]
            unsafe fn avx2<const N: usize>($($arg: &[f64; N]),+) -> [f64; N] {
                $each($($arg),+)
            }
            if std::arch::is_x86_feature_detected!("avx512f") {
                // SAFETY: the CPU has AVX-512F, checked just above.
                return unsafe { avx512($($arg),+) };
            }
            if std::arch::is_x86_feature_detected!("avx2") {
                // SAFETY: the CPU has AVX2, checked just above.
                return unsafe { avx2($($arg),+) };
            }
        }
        $each($($arg),+)
    }};
}

pub(crate) use widest_lanes;
