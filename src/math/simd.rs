//! Run-time choice of the instruction set for the vectorised kernels.
//!
//! A kernel is written once as an `#[inline(always)]` function; [`multiversion!`] wraps it in
//! copies compiled for AVX-512 and for AVX2+FMA plus the baseline, and calls the best one the
//! CPU supports. Every copy performs the same IEEE operations in the same order (Rust does not
//! contract a·b + c into a fused multiply-add), so results do not depend on the copy chosen.

use std::sync::OnceLock;

/// The instruction sets the kernels are compiled for.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Level {
    /// AVX-512F (with AVX2 and FMA).
    Avx512,
    /// AVX2 with FMA.
    Avx2,
    /// The target's baseline.
    Baseline,
}

/// The best level this CPU supports (detected once).
pub fn level() -> Level {
    static LEVEL: OnceLock<Level> = OnceLock::new();
    *LEVEL.get_or_init(|| {
        #[cfg(target_arch = "x86_64")]
        {
            if std::arch::is_x86_feature_detected!("avx512f") {
                return Level::Avx512;
            }
            if std::arch::is_x86_feature_detected!("avx2") && std::arch::is_x86_feature_detected!("fma") {
                return Level::Avx2;
            }
        }
        Level::Baseline
    })
}

/// `multiversion!(fn name<T: Bound, U: Other>(a: A, b: B) -> R => body);` defines `name`, which calls
/// `body(a, b)` compiled for the best [`Level`] of this CPU.
macro_rules! multiversion {
    ($vis:vis fn $name:ident $(<$($g:ident: $bound:path),+>)? ($($arg:ident: $ty:ty),* $(,)?) -> $ret:ty => $body:ident) => {
        $vis fn $name $(<$($g: $bound),+>)? ($($arg: $ty),*) -> $ret {
            #[cfg(target_arch = "x86_64")]
            {
                #[target_feature(enable = "avx512f,avx2,fma")]
                fn v512 $(<$($g: $bound),+>)? ($($arg: $ty),*) -> $ret {
                    $body($($arg),*)
                }
                #[target_feature(enable = "avx2,fma")]
                fn v2 $(<$($g: $bound),+>)? ($($arg: $ty),*) -> $ret {
                    $body($($arg),*)
                }
                match $crate::math::simd::level() {
                    // SAFETY: level() found the features these copies were compiled for.
                    $crate::math::simd::Level::Avx512 => return unsafe { v512($($arg),*) },
                    // SAFETY: as above.
                    $crate::math::simd::Level::Avx2 => return unsafe { v2($($arg),*) },
                    $crate::math::simd::Level::Baseline => {}
                }
            }
            $body($($arg),*)
        }
    };
}
pub(crate) use multiversion;
