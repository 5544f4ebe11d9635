//! Dense linear algebra that mortise does itself rather than through
//! nalgebra, where nalgebra's result was found wrong: the complex singular
//! value decomposition ([`svd`]).

pub(crate) mod jacobi_lanes;
pub mod svd;

/// True when the processor has AVX2 and FMA (x86-64; asked once). The one
/// place mortise asks, for the copies of its hot loops compiled for them
/// (the coupling's kernel, the SVD's Jacobi); those copies use no fused
/// multiply-add of their own accord, so their bits are the plain build's.
#[cfg(target_arch = "x86_64")]
pub(crate) fn avx2_fma() -> bool {
    static HAS: std::sync::OnceLock<bool> = std::sync::OnceLock::new();
    *HAS.get_or_init(|| {
        std::is_x86_feature_detected!("avx2") && std::is_x86_feature_detected!("fma")
    })
}
