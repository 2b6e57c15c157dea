//! Comparisons that do not flip on floating-point noise: two figures
//! computed along different paths (a rating sized to equal the worst
//! current, a window edge equal to a requirement) differ in their last
//! bits. A difference smaller than [`RELATIVE`] of the larger magnitude
//! counts as equal, so `exceeds` and `below` only report real differences.

/// Relative difference under which two figures count as equal: 1e-9, far
/// below any tolerance a spec states and far above f64 rounding (~1e-16).
pub const RELATIVE: f64 = 1e-9;

fn slack(a: f64, b: f64) -> f64 {
    RELATIVE * a.abs().max(b.abs())
}

/// `a > b` by more than noise.
pub fn exceeds(a: f64, b: f64) -> bool {
    a > b + slack(a, b)
}

/// `a < b` by more than noise.
pub fn below(a: f64, b: f64) -> bool {
    a < b - slack(a, b)
}

/// `a <= b`, allowing noise.
pub fn at_most(a: f64, b: f64) -> bool {
    !exceeds(a, b)
}

/// `a >= b`, allowing noise.
pub fn at_least(a: f64, b: f64) -> bool {
    !below(a, b)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn noise_is_equality() {
        // 0.1 + 0.2 is 0.30000000000000004 in binary floating point.
        assert!(!exceeds(0.1 + 0.2, 0.3));
        assert!(at_most(0.1 + 0.2, 0.3) && at_least(0.3, 0.1 + 0.2));
        assert!(exceeds(0.300001, 0.3) && below(0.299999, 0.3));
        assert!(!below(0.0, 0.0) && !exceeds(-0.0, 0.0));
    }
}
