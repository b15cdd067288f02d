//! Special functions the count models need beyond statrs: the trigamma function.

/// The trigamma function `psi'(x)` for `x > 0`: recurrence up to `x >= 10`, then the
/// asymptotic series (Abramowitz and Stegun, *Handbook of Mathematical Functions*, 6.4.12),
/// accurate to about 1e-13 relative. The formula numbers are cited from memory; the tests
/// check the function against values it must take (`psi'(1) = pi^2 / 6`, the recurrence).
pub(super) fn trigamma(mut x: f64) -> f64 {
    let mut acc = 0.0;
    while x < 10.0 {
        acc += 1.0 / (x * x);
        x += 1.0;
    }
    let z = 1.0 / (x * x);
    // 1/x + 1/(2x^2) + 1/(6x^3) - 1/(30x^5) + 1/(42x^7) - 1/(30x^9) + 5/(66x^11)
    let tail = z / x
        * (1.0 / 6.0 + z * (-1.0 / 30.0 + z * (1.0 / 42.0 + z * (-1.0 / 30.0 + z * 5.0 / 66.0))));
    acc + 1.0 / x + 0.5 * z + tail
}

#[cfg(test)]
mod tests {
    use super::trigamma;

    /// Closed forms: psi'(1) = pi^2/6, psi'(1/2) = pi^2/2, psi'(n+1) = pi^2/6 - sum 1/k^2
    /// (Abramowitz and Stegun 6.4.2, 6.4.4, 6.4.6).
    #[test]
    fn matches_closed_forms() {
        let pi2 = std::f64::consts::PI.powi(2);
        let close = |a: f64, b: f64| (a - b).abs() <= 1e-12 * b.abs();
        assert!(close(trigamma(1.0), pi2 / 6.0), "{}", trigamma(1.0));
        assert!(close(trigamma(0.5), pi2 / 2.0), "{}", trigamma(0.5));
        let h: f64 = (1..=20).map(|k| 1.0 / (k as f64).powi(2)).sum();
        assert!(close(trigamma(21.0), pi2 / 6.0 - h), "{}", trigamma(21.0));
    }
}
