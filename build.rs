//! Build script: with the opt-in `system-lapack` feature, link the system's
//! reference-interface BLAS and LAPACK libraries (`-llapack -lblas`) for the
//! symbols clarabel's PSD cone calls. With the default `pure-lapack` feature
//! nothing is emitted: the `finespike-lapack` crate provides those symbols.

fn main() {
    println!("cargo:rerun-if-changed=build.rs");
    let system = std::env::var_os("CARGO_FEATURE_SYSTEM_LAPACK").is_some();
    let pure = std::env::var_os("CARGO_FEATURE_PURE_LAPACK").is_some();
    if system {
        if pure {
            // Both providers define the same symbols; the statically linked
            // pure-Rust ones take precedence over the shared libraries.
            println!(
                "cargo:warning=features `system-lapack` and `pure-lapack` are both enabled; \
                 the pure-Rust routines will be used (build with --no-default-features \
                 --features system-lapack to use the system libraries)"
            );
        }
        println!("cargo:rustc-link-lib=lapack");
        println!("cargo:rustc-link-lib=blas");
    }
}
