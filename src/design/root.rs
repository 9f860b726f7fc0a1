//! Brent's bracketed root finder (R. P. Brent, *Algorithms for Minimization without
//! Derivatives*, 1973, ch. 4, "zeroin"): inverse quadratic interpolation and secant steps,
//! falling back to bisection, so it never leaves the bracket and converges at least as fast
//! as bisection. The function may fail (an evaluation is a whole rating); a failure ends the
//! search with that error.

/// A root of `f` in [a, b], where f(a) and f(b) differ in sign (given as `fa`, `fb`).
/// Stops when |f| ≤ `f_tol` or the bracket is narrower than `x_tol`; returns (x, f(x),
/// evaluations made).
pub fn brent<E>(
    mut f: impl FnMut(f64) -> Result<f64, E>,
    (mut a, mut fa): (f64, f64),
    (mut b, mut fb): (f64, f64),
    x_tol: f64,
    f_tol: f64,
    max_evaluations: usize,
) -> Result<(f64, f64, usize), E> {
    debug_assert!(fa * fb <= 0.0, "the root must be bracketed");
    if fa.abs() <= f_tol {
        return Ok((a, fa, 0));
    }
    if fb.abs() <= f_tol {
        return Ok((b, fb, 0));
    }
    let (mut c, mut fc) = (a, fa);
    let mut d = b - a;
    let mut e = d;
    let mut evaluations = 0;
    loop {
        if fb.signum() == fc.signum() {
            c = a;
            fc = fa;
            d = b - a;
            e = d;
        }
        if fc.abs() < fb.abs() {
            a = b;
            b = c;
            c = a;
            fa = fb;
            fb = fc;
            fc = fa;
        }
        let tol = 2.0 * f64::EPSILON * b.abs() + 0.5 * x_tol;
        let m = 0.5 * (c - b);
        if m.abs() <= tol || fb.abs() <= f_tol || evaluations >= max_evaluations {
            return Ok((b, fb, evaluations));
        }
        if e.abs() >= tol && fa.abs() > fb.abs() {
            let s = fb / fa;
            let (mut p, mut q);
            if a == c {
                // Secant.
                p = 2.0 * m * s;
                q = 1.0 - s;
            } else {
                // Inverse quadratic interpolation.
                let qq = fa / fc;
                let r = fb / fc;
                p = s * (2.0 * m * qq * (qq - r) - (b - a) * (r - 1.0));
                q = (qq - 1.0) * (r - 1.0) * (s - 1.0);
            }
            if p > 0.0 {
                q = -q;
            } else {
                p = -p;
            }
            if 2.0 * p < (3.0 * m * q - (tol * q).abs()).min((e * q).abs()) {
                e = d;
                d = p / q;
            } else {
                d = m;
                e = m;
            }
        } else {
            d = m;
            e = m;
        }
        a = b;
        fa = fb;
        b += if d.abs() > tol { d } else { tol.copysign(m) };
        fb = f(b)?;
        evaluations += 1;
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn solve(f: impl Fn(f64) -> f64, a: f64, b: f64) -> (f64, usize) {
        let (x, _, n) = brent(|x| Ok::<f64, ()>(f(x)), (a, f(a)), (b, f(b)), 1e-14, 0.0, 200).unwrap();
        (x, n)
    }

    #[test]
    fn finds_known_roots_in_few_evaluations() {
        // x³ − 2x − 5 = 0: Wallis's example, root 2.0945514815423265 [A].
        let (x, n) = solve(|x| x * x * x - 2.0 * x - 5.0, 2.0, 3.0);
        assert!((x - 2.094_551_481_542_326_5).abs() < 1e-12, "{x}");
        assert!(n < 12, "{n} evaluations");
        // cos x = x: 0.7390851332151607 (the Dottie number) [A].
        let (x, _) = solve(|x| x.cos() - x, 0.0, 1.0);
        assert!((x - 0.739_085_133_215_160_7).abs() < 1e-12);
        // A function bisection handles and interpolation does badly on: stays bracketed.
        let (x, n) = solve(|x| (x - 1.0_f64).powi(3).cbrt().signum() * (x - 1.0).abs().powf(0.1), 0.0, 3.0);
        assert!((x - 1.0).abs() < 1e-10 && n < 120, "{x} after {n}");
    }

    #[test]
    fn a_failed_evaluation_ends_the_search() {
        let r = brent(|x| if x > 0.5 { Err("failed") } else { Ok(x - 0.7) }, (0.0, -0.7), (1.0, 0.3), 1e-12, 0.0, 50);
        assert_eq!(r.unwrap_err(), "failed");
    }
}
