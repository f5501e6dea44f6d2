//! Transcendental functions that give the same bits on every target.
//!
//! The platform maths library (glibc natively) and Rust's port used on wasm32 round differently
//! in the last bit, which the time stepping then amplifies. The solver therefore calls the pure
//! Rust `libm` crate on every target (a port of the musl maths library), so the browser build
//! reproduces native step results bit for bit. `sqrt` and the basic operations are exactly
//! rounded by IEEE 754 everywhere and need no wrapper.

/// The larger of two numbers (for finite numbers the same as `f64::max`, which compiles to a
/// function call on wasm32 because of its NaN rules; this is one comparison everywhere).
#[inline(always)]
pub fn larger(a: f64, b: f64) -> f64 {
    if a > b {
        a
    } else {
        b
    }
}

/// The smaller of two numbers (see [`larger`]).
#[inline(always)]
pub fn smaller(a: f64, b: f64) -> f64 {
    if a < b {
        a
    } else {
        b
    }
}

/// Portable transcendental functions, as methods so call sites read like `f64`'s own.
pub trait DetMath {
    /// Natural logarithm.
    fn dln(self) -> f64;
    /// Exponential.
    fn dexp(self) -> f64;
    /// Four-quadrant arctangent of `self / x`.
    fn datan2(self, x: f64) -> f64;
    /// Arctangent.
    fn datan(self) -> f64;
    /// Sine.
    fn dsin(self) -> f64;
    /// Cosine.
    fn dcos(self) -> f64;
    /// Sine and cosine.
    fn dsin_cos(self) -> (f64, f64);
    /// Power with a real exponent.
    fn dpowf(self, e: f64) -> f64;
    /// Base-10 logarithm.
    fn dlog10(self) -> f64;
}

impl DetMath for f64 {
    #[inline]
    fn dln(self) -> f64 {
        libm::log(self)
    }
    #[inline]
    fn dexp(self) -> f64 {
        libm::exp(self)
    }
    #[inline]
    fn datan2(self, x: f64) -> f64 {
        libm::atan2(self, x)
    }
    #[inline]
    fn datan(self) -> f64 {
        libm::atan(self)
    }
    #[inline]
    fn dsin(self) -> f64 {
        libm::sin(self)
    }
    #[inline]
    fn dcos(self) -> f64 {
        libm::cos(self)
    }
    #[inline]
    fn dsin_cos(self) -> (f64, f64) {
        libm::sincos(self)
    }
    #[inline]
    fn dpowf(self, e: f64) -> f64 {
        libm::pow(self, e)
    }
    #[inline]
    fn dlog10(self) -> f64 {
        libm::log10(self)
    }
}

#[cfg(test)]
mod tests {
    use super::DetMath;

    #[test]
    fn agrees_with_the_platform_library_to_rounding() {
        for x in [0.1f64, 0.5, 1.0, 2.5, 10.0] {
            assert!((x.dln() - x.ln()).abs() <= 2.0 * f64::EPSILON * x.ln().abs().max(1.0));
            assert!((x.dexp() / x.exp() - 1.0).abs() <= 2.0 * f64::EPSILON);
            assert!((x.dsin() - x.sin()).abs() <= 2.0 * f64::EPSILON);
            assert!((x.datan2(0.3) - x.atan2(0.3)).abs() <= 2.0 * f64::EPSILON * 4.0);
        }
    }
}
