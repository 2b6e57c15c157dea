//! Normal-distribution helpers for the statistical limit window.

/// The complementary error function, erfc(x), to about 1.2e-7 relative
/// accuracy everywhere (Chebyshev fit of the form exp(-z^2 - 1.26551223 + ...),
/// the classic rational approximation used in numerical libraries).
pub fn erfc(x: f64) -> f64 {
    let z = x.abs();
    let t = 1.0 / (1.0 + 0.5 * z);
    let poly = -z * z - 1.265_512_23
        + t * (1.000_023_68
            + t * (0.374_091_96
                + t * (0.096_784_18
                    + t * (-0.186_288_06
                        + t * (0.278_868_07
                            + t * (-1.135_203_98
                                + t * (1.488_515_87 + t * (-0.822_152_23 + t * 0.170_872_77))))))));
    let r = t * poly.exp();
    if x >= 0.0 { r } else { 2.0 - r }
}

/// The standard normal cumulative distribution Φ(z).
pub fn normal_cdf(z: f64) -> f64 {
    0.5 * erfc(-z / std::f64::consts::SQRT_2)
}

#[cfg(test)]
mod tests {
    use super::*;

    // Standard normal table values (any statistics handbook; the same values
    // come from scipy.stats.norm.cdf): Φ(0) = 0.5, Φ(-1) = 0.158655254,
    // Φ(-2) = 0.022750132, Φ(-3) = 0.001349898, Φ(-4.5) = 3.397673e-6.
    #[test]
    fn matches_normal_table() {
        let cases = [
            (0.0, 0.5),
            (-1.0, 0.158_655_254),
            (-2.0, 0.022_750_132),
            (-3.0, 0.001_349_898),
            (-4.5, 3.397_673e-6),
        ];
        for (z, p) in cases {
            let got = normal_cdf(z);
            assert!(((got - p) / p).abs() < 2e-6, "Φ({z}) = {got}, table {p}");
        }
        assert!((normal_cdf(3.0) - 0.998_650_102).abs() < 1e-8);
    }
}
