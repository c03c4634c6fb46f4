//! The batch kernels twice over: as built for the baseline of the target
//! (on x86-64, SSE2: two `f64` a vector) and, chosen at run time on a CPU
//! that has them, with AVX2 and FMA (four). The same source and the same
//! operations in the same order: Rust never fuses a multiply and an add
//! unless asked (`mul_add`), so both give the same bits, and a budget does
//! not depend on the machine it ran on. The column kernels' tests
//! (`eval::lanes`) run both builds (`portable` forces the baseline one
//! in a test) and hold every lane to the bits of the single-run
//! evaluator, which is built for the baseline; the draws' test
//! `a_batch_of_normals_is_each_trials_normal` does the same.

/// Whether this CPU runs the wide kernels. The standard library detects
/// the features once and caches them, so this is a load and a test.
#[inline(always)]
pub fn available() -> bool {
    #[cfg(test)]
    if PORTABLE_ONLY.with(std::cell::Cell::get) {
        return false;
    }
    #[cfg(target_arch = "x86_64")]
    {
        std::arch::is_x86_feature_detected!("avx2") && std::arch::is_x86_feature_detected!("fma")
    }
    #[cfg(not(target_arch = "x86_64"))]
    {
        false
    }
}

/// `kernel()`, compiled with AVX2 and FMA where the CPU has them. What
/// `kernel` inlines (its `#[inline(always)]` callees) is compiled with
/// them too; what it calls out of line is not.
#[inline(always)]
pub fn run<R>(kernel: impl FnOnce() -> R) -> R {
    #[cfg(target_arch = "x86_64")]
    if available() {
        // SAFETY: the CPU has both features, checked just above.
        return unsafe { avx2_fma(kernel) };
    }
    kernel()
}

#[cfg(target_arch = "x86_64")]
#[target_feature(enable = "avx2,fma")]
fn avx2_fma<R>(kernel: impl FnOnce() -> R) -> R {
    kernel()
}

#[cfg(test)]
thread_local! {
    /// Set while a test runs the portable build on a CPU with AVX2.
    static PORTABLE_ONLY: std::cell::Cell<bool> = const { std::cell::Cell::new(false) };
}

/// `kernel()` with every wide kernel it reaches built for the baseline,
/// whatever the CPU: for the tests that hold the two builds to the same
/// bits.
#[cfg(test)]
pub fn portable<R>(kernel: impl FnOnce() -> R) -> R {
    PORTABLE_ONLY.with(|p| p.set(true));
    let result = kernel();
    PORTABLE_ONLY.with(|p| p.set(false));
    result
}

#[cfg(test)]
mod tests {
    #[test]
    fn a_test_can_ask_for_the_portable_build_on_any_cpu() {
        assert!(!super::portable(super::available));
        #[cfg(target_arch = "x86_64")]
        assert_eq!(
            super::available(),
            std::arch::is_x86_feature_detected!("avx2")
                && std::arch::is_x86_feature_detected!("fma")
        );
    }
}
