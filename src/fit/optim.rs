//! Small numerical tools for the fits: bracketed root finding, 1-D
//! maximisation, Nelder–Mead, a Newton polish, finite-difference Hessians
//! and tiny dense matrix algebra (at most 3 x 3).
//!
//! Owns: only numerics; knows nothing about life data.
//! May use: `std` only. Every routine returns `None` (or keeps its best
//! point) instead of panicking when the input is not finite.

// Dense matrix algebra reads best with explicit indices.
#![allow(clippy::needless_range_loop)]

/// Brent's method (Brent 1973, "Algorithms for Minimization without
/// Derivatives", ch. 4) for a root of `f` in `[a, b]`, where `f(a)` and
/// `f(b)` have opposite signs. Returns `None` without a sign change or when
/// `f` is not finite.
pub(crate) fn brent_root(
    f: &mut dyn FnMut(f64) -> f64,
    mut a: f64,
    mut b: f64,
    rel_tol: f64,
) -> Option<f64> {
    let mut fa = f(a);
    let mut fb = f(b);
    if !fa.is_finite() || !fb.is_finite() {
        return None;
    }
    if fa == 0.0 {
        return Some(a);
    }
    if fb == 0.0 {
        return Some(b);
    }
    if fa.signum() == fb.signum() {
        return None;
    }
    let mut c = a;
    let mut fc = fa;
    let mut d = b - a;
    let mut e = d;
    for _ in 0..300 {
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
        let tol = 2.0 * f64::EPSILON * b.abs() + 0.5 * rel_tol * b.abs().max(f64::MIN_POSITIVE);
        let m = 0.5 * (c - b);
        if m.abs() <= tol || fb == 0.0 {
            return Some(b);
        }
        if e.abs() >= tol && fa.abs() > fb.abs() {
            let s = fb / fa;
            let (mut p, mut q);
            if a == c {
                p = 2.0 * m * s;
                q = 1.0 - s;
            } else {
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
        fb = f(b);
        if !fb.is_finite() {
            return None;
        }
    }
    Some(b)
}

/// Golden-section search for the maximum of a unimodal `f` on `[a, b]`.
/// Returns `(x, f(x))`; non-finite values count as minus infinity.
pub(crate) fn golden_max(f: &mut dyn FnMut(f64) -> f64, mut a: f64, mut b: f64) -> (f64, f64) {
    let g = |v: f64| if v.is_finite() { v } else { f64::NEG_INFINITY };
    let r = 0.5 * (5f64.sqrt() - 1.0);
    let mut x1 = b - r * (b - a);
    let mut x2 = a + r * (b - a);
    let mut f1 = g(f(x1));
    let mut f2 = g(f(x2));
    for _ in 0..200 {
        if (b - a).abs() <= 1e-12 * (a.abs() + b.abs()).max(1e-300) {
            break;
        }
        if f1 >= f2 {
            b = x2;
            x2 = x1;
            f2 = f1;
            x1 = b - r * (b - a);
            f1 = g(f(x1));
        } else {
            a = x1;
            x1 = x2;
            f1 = f2;
            x2 = a + r * (b - a);
            f2 = g(f(x2));
        }
    }
    if f1 >= f2 { (x1, f1) } else { (x2, f2) }
}

/// Brent's minimisation without derivatives (Brent 1973, ch. 5: golden
/// section with parabolic steps) of `-f` on `[a, b]`, that is the maximum
/// of `f`, to a relative tolerance `tol` in `x`. Non-finite values count as
/// minus infinity. Returns `(x, f(x))`.
pub(crate) fn brent_max(
    f: &mut dyn FnMut(f64) -> f64,
    mut a: f64,
    mut b: f64,
    tol: f64,
) -> (f64, f64) {
    let mut g = |x: f64| {
        let v = f(x);
        if v.is_finite() { -v } else { f64::INFINITY }
    };
    let c = 0.5 * (3.0 - 5f64.sqrt());
    let mut x = a + c * (b - a);
    let (mut w, mut v) = (x, x);
    let mut fx = g(x);
    let (mut fw, mut fv) = (fx, fx);
    let (mut d, mut e): (f64, f64) = (0.0, 0.0);
    for _ in 0..500 {
        let m = 0.5 * (a + b);
        let tol1 = tol * x.abs() + 1e-14;
        let tol2 = 2.0 * tol1;
        if (x - m).abs() <= tol2 - 0.5 * (b - a) {
            break;
        }
        let mut golden = true;
        if e.abs() > tol1 && fx.is_finite() && fw.is_finite() && fv.is_finite() {
            let r = (x - w) * (fx - fv);
            let mut q = (x - v) * (fx - fw);
            let mut p = (x - v) * q - (x - w) * r;
            q = 2.0 * (q - r);
            if q > 0.0 {
                p = -p;
            } else {
                q = -q;
            }
            if p.abs() < (0.5 * q * e).abs() && p > q * (a - x) && p < q * (b - x) {
                e = d;
                d = p / q;
                let u = x + d;
                if u - a < tol2 || b - u < tol2 {
                    d = tol1.copysign(m - x);
                }
                golden = false;
            }
        }
        if golden {
            e = if x < m { b - x } else { a - x };
            d = c * e;
        }
        let u = if d.abs() >= tol1 {
            x + d
        } else {
            x + tol1.copysign(d)
        };
        let fu = g(u);
        if fu <= fx {
            if u < x {
                b = x;
            } else {
                a = x;
            }
            v = w;
            fv = fw;
            w = x;
            fw = fx;
            x = u;
            fx = fu;
        } else {
            if u < x {
                a = u;
            } else {
                b = u;
            }
            if fu <= fw || w == x {
                v = w;
                fv = fw;
                w = u;
                fw = fu;
            } else if fu <= fv || v == x || v == w {
                v = u;
                fv = fu;
            }
        }
    }
    (x, -fx)
}

/// The maximum of `f` near `x0`: steps of `step` (doubling) uphill until
/// `f` falls again, at most to `[lo, hi]`, then [`brent_max`] on the
/// bracket. Returns `Ok((x, f(x)))`; `Err(Some(..))` when `f` keeps rising
/// to `lo` or `hi` (the point reached), `Err(None)` when `f(x0)` is not
/// finite.
pub(crate) fn max_1d(
    f: &mut dyn FnMut(f64) -> f64,
    x0: f64,
    step: f64,
    lo: f64,
    hi: f64,
    tol: f64,
) -> Result<(f64, f64), Option<(f64, f64)>> {
    let mut m = x0.clamp(lo, hi);
    let mut fm = f(m);
    if !fm.is_finite() {
        return Err(None);
    }
    let mut s = step;
    let mut r = (m + s).min(hi);
    let mut fr = f(r);
    let (a, b);
    if fr > fm {
        let mut l;
        loop {
            l = m;
            m = r;
            fm = fr;
            if m >= hi {
                return Err(Some((m, fm)));
            }
            s *= 2.0;
            r = (m + s).min(hi);
            fr = f(r);
            if fr.is_nan() || fr <= fm {
                break;
            }
        }
        (a, b) = (l, r);
    } else {
        let hi_end = r;
        let mut rr = hi_end;
        let mut l = (m - s).max(lo);
        let mut fl = f(l);
        while fl > fm {
            rr = m;
            m = l;
            fm = fl;
            if m <= lo {
                return Err(Some((m, fm)));
            }
            s *= 2.0;
            l = (m - s).max(lo);
            fl = f(l);
        }
        (a, b) = (l, rr);
    }
    let (x, fx) = brent_max(f, a, b, tol);
    Ok(if fx >= fm { (x, fx) } else { (m, fm) })
}

/// Nelder–Mead simplex minimisation (Nelder & Mead 1965, with the standard
/// coefficients 1, 2, 1/2, 1/2), restarted once from its result to avoid
/// a collapsed simplex. Stops when the values across the simplex agree to
/// `ftol` (relative) and the points to `sqrt(ftol)`. Non-finite values count
/// as plus infinity. Returns the best point and its value.
pub(crate) fn nelder_mead(
    f: &mut dyn FnMut(&[f64]) -> f64,
    x0: &[f64],
    step: &[f64],
    max_evals: usize,
    ftol: f64,
) -> (Vec<f64>, f64) {
    let mut x = x0.to_vec();
    let mut fx = f64::INFINITY;
    for round in 0..3 {
        let (nx, nf) = nelder_mead_once(f, &x, step, max_evals, ftol);
        let improved = nf < fx - 1e-12 * nf.abs().max(1.0);
        x = nx;
        fx = nf;
        if !improved && round > 0 {
            break;
        }
    }
    (x, fx)
}

fn nelder_mead_once(
    f: &mut dyn FnMut(&[f64]) -> f64,
    x0: &[f64],
    step: &[f64],
    max_evals: usize,
    ftol: f64,
) -> (Vec<f64>, f64) {
    let n = x0.len();
    let mut eval = |p: &[f64]| {
        let v = f(p);
        if v.is_nan() { f64::INFINITY } else { v }
    };
    let mut simplex: Vec<(Vec<f64>, f64)> = Vec::with_capacity(n + 1);
    simplex.push((x0.to_vec(), eval(x0)));
    for i in 0..n {
        let mut p = x0.to_vec();
        p[i] += step[i];
        let v = eval(&p);
        simplex.push((p, v));
    }
    let mut evals = n + 1;
    while evals < max_evals {
        simplex.sort_by(|a, b| a.1.total_cmp(&b.1));
        let best = simplex[0].1;
        let worst = simplex[n].1;
        let spread_f = (worst - best).abs();
        let spread_x = (1..=n)
            .map(|j| {
                (0..n)
                    .map(|i| (simplex[j].0[i] - simplex[0].0[i]).abs())
                    .fold(0.0, f64::max)
            })
            .fold(0.0, f64::max);
        if best.is_finite() && spread_f <= ftol * best.abs().max(1e-10) && spread_x <= ftol.sqrt() {
            break;
        }
        let centroid: Vec<f64> = (0..n)
            .map(|i| simplex[..n].iter().map(|s| s.0[i]).sum::<f64>() / n as f64)
            .collect();
        let along = |t: f64| -> Vec<f64> {
            (0..n)
                .map(|i| centroid[i] + t * (simplex[n].0[i] - centroid[i]))
                .collect()
        };
        let xr = along(-1.0);
        let fr = eval(&xr);
        evals += 1;
        if fr < simplex[0].1 {
            let xe = along(-2.0);
            let fe = eval(&xe);
            evals += 1;
            simplex[n] = if fe < fr { (xe, fe) } else { (xr, fr) };
        } else if fr < simplex[n - 1].1 {
            simplex[n] = (xr, fr);
        } else {
            let (xc, fc) = if fr < simplex[n].1 {
                let xc = along(-0.5);
                let fc = eval(&xc);
                (xc, fc)
            } else {
                let xc = along(0.5);
                let fc = eval(&xc);
                (xc, fc)
            };
            evals += 1;
            if fc < simplex[n].1.min(fr) {
                simplex[n] = (xc, fc);
            } else {
                // Shrink towards the best point.
                let b = simplex[0].0.clone();
                for s in simplex.iter_mut().skip(1) {
                    for i in 0..n {
                        s.0[i] = b[i] + 0.5 * (s.0[i] - b[i]);
                    }
                    s.1 = eval(&s.0);
                }
                evals += n;
            }
        }
    }
    simplex.sort_by(|a, b| a.1.total_cmp(&b.1));
    let (x, v) = simplex.swap_remove(0);
    (x, v)
}

/// Central-difference gradient and Hessian of `f` at `x` with steps `h`.
/// Returns `None` when any value is not finite.
pub(crate) fn gradient_hessian(
    f: &mut dyn FnMut(&[f64]) -> f64,
    x: &[f64],
    h: &[f64],
) -> Option<(Vec<f64>, Vec<Vec<f64>>)> {
    let n = x.len();
    let f0 = f(x);
    if !f0.is_finite() {
        return None;
    }
    let mut at = |d: &[(usize, f64)]| -> Option<f64> {
        let mut p = x.to_vec();
        for &(i, s) in d {
            p[i] += s;
        }
        let v = f(&p);
        v.is_finite().then_some(v)
    };
    let mut g = vec![0.0; n];
    let mut hm = vec![vec![0.0; n]; n];
    for i in 0..n {
        let fp = at(&[(i, h[i])])?;
        let fm = at(&[(i, -h[i])])?;
        g[i] = (fp - fm) / (2.0 * h[i]);
        hm[i][i] = (fp - 2.0 * f0 + fm) / (h[i] * h[i]);
    }
    for i in 0..n {
        for j in (i + 1)..n {
            let pp = at(&[(i, h[i]), (j, h[j])])?;
            let pm = at(&[(i, h[i]), (j, -h[j])])?;
            let mp = at(&[(i, -h[i]), (j, h[j])])?;
            let mm = at(&[(i, -h[i]), (j, -h[j])])?;
            let v = (pp - pm - mp + mm) / (4.0 * h[i] * h[j]);
            hm[i][j] = v;
            hm[j][i] = v;
        }
    }
    Some((g, hm))
}

/// Newton steps on a log-likelihood `ll` (to be maximised) from `x`, with
/// step halving; keeps the best point found. Used to polish a simplex
/// result to full precision.
pub(crate) fn newton_polish(ll: &mut dyn FnMut(&[f64]) -> f64, x: &[f64], h: &[f64]) -> Vec<f64> {
    let mut x = x.to_vec();
    let mut fx = ll(&x);
    if !fx.is_finite() {
        return x;
    }
    for _ in 0..20 {
        let Some((g, hm)) = gradient_hessian(ll, &x, h) else {
            break;
        };
        // Solve (-H) d = g; -H must be positive definite.
        let neg: Vec<Vec<f64>> = hm
            .iter()
            .map(|row| row.iter().map(|v| -v).collect())
            .collect();
        let Some(d) = cholesky(&neg).map(|l| cholesky_solve(&l, &g)) else {
            break;
        };
        let mut t = 1.0;
        let mut moved = false;
        for _ in 0..30 {
            let p: Vec<f64> = x.iter().zip(&d).map(|(a, b)| a + t * b).collect();
            let fp = ll(&p);
            if fp.is_finite() && fp >= fx {
                let gain = fp - fx;
                x = p;
                fx = fp;
                moved = gain > 1e-15 * fx.abs().max(1.0);
                break;
            }
            t *= 0.5;
        }
        if !moved {
            break;
        }
    }
    x
}

/// Cholesky factor `L` (lower triangular, `A = L L^T`) of a symmetric
/// positive-definite matrix; `None` if it is not positive definite.
pub(crate) fn cholesky(a: &[Vec<f64>]) -> Option<Vec<Vec<f64>>> {
    let n = a.len();
    let mut l = vec![vec![0.0; n]; n];
    for i in 0..n {
        for j in 0..=i {
            let mut s = a[i][j];
            for k in 0..j {
                s -= l[i][k] * l[j][k];
            }
            if i == j {
                if !(s > 0.0 && s.is_finite()) {
                    return None;
                }
                l[i][i] = s.sqrt();
            } else {
                l[i][j] = s / l[j][j];
                if !l[i][j].is_finite() {
                    return None;
                }
            }
        }
    }
    Some(l)
}

/// Solve `L L^T x = b` given the Cholesky factor.
pub(crate) fn cholesky_solve(l: &[Vec<f64>], b: &[f64]) -> Vec<f64> {
    let n = b.len();
    let mut y = vec![0.0; n];
    for i in 0..n {
        let mut s = b[i];
        for k in 0..i {
            s -= l[i][k] * y[k];
        }
        y[i] = s / l[i][i];
    }
    let mut x = vec![0.0; n];
    for i in (0..n).rev() {
        let mut s = y[i];
        for k in (i + 1)..n {
            s -= l[k][i] * x[k];
        }
        x[i] = s / l[i][i];
    }
    x
}

/// Inverse of a symmetric positive-definite matrix; `None` if it is not
/// positive definite (or not finite).
pub(crate) fn spd_inverse(a: &[Vec<f64>]) -> Option<Vec<Vec<f64>>> {
    let n = a.len();
    let l = cholesky(a)?;
    let mut inv = vec![vec![0.0; n]; n];
    for j in 0..n {
        let mut e = vec![0.0; n];
        e[j] = 1.0;
        let col = cholesky_solve(&l, &e);
        for i in 0..n {
            inv[i][j] = col[i];
        }
    }
    // Symmetrise against rounding.
    for i in 0..n {
        for j in (i + 1)..n {
            let m = 0.5 * (inv[i][j] + inv[j][i]);
            inv[i][j] = m;
            inv[j][i] = m;
        }
    }
    inv.iter().flatten().all(|v| v.is_finite()).then_some(inv)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn brent_finds_cube_root() {
        let r = brent_root(&mut |x| x * x * x - 2.0, 0.0, 3.0, 1e-14).unwrap();
        assert!((r - 2f64.cbrt()).abs() < 1e-12);
        assert!(brent_root(&mut |x| x * x + 1.0, -1.0, 1.0, 1e-12).is_none());
        assert!(brent_root(&mut |_| f64::NAN, -1.0, 1.0, 1e-12).is_none());
    }

    #[test]
    fn nelder_mead_rosenbrock() {
        // Rosenbrock's function, minimum 0 at (1, 1): a standard optimiser test.
        let mut f = |p: &[f64]| (1.0 - p[0]).powi(2) + 100.0 * (p[1] - p[0] * p[0]).powi(2);
        let (x, v) = nelder_mead(&mut f, &[-1.2, 1.0], &[0.5, 0.5], 5000, 1e-13);
        assert!(v < 1e-10, "{v}");
        assert!((x[0] - 1.0).abs() < 1e-4 && (x[1] - 1.0).abs() < 1e-4);
    }

    #[test]
    fn one_dimensional_maxima() {
        let (x, v) = brent_max(&mut |x| -(x - 0.3) * (x - 0.3) + 2.0, -1.0, 1.0, 1e-10);
        assert!((x - 0.3).abs() < 1e-8 && (v - 2.0).abs() < 1e-14, "{x} {v}");
        // Far from the start, bracketed by doubling steps.
        let (x, _) = max_1d(&mut |x| -(x - 37.0).powi(2), 0.0, 0.5, -1e3, 1e3, 1e-12).unwrap();
        assert!((x - 37.0).abs() < 1e-8, "{x}");
        let (x, _) = max_1d(&mut |x| -(x + 5.0).powi(2), 0.0, 0.5, -1e3, 1e3, 1e-12).unwrap();
        assert!((x + 5.0).abs() < 1e-8, "{x}");
        // Rising to the limit.
        assert_eq!(
            max_1d(&mut |x| x, 0.0, 1.0, -10.0, 10.0, 1e-9),
            Err(Some((10.0, 10.0)))
        );
        assert_eq!(
            max_1d(&mut |_| f64::NAN, 0.0, 1.0, -1.0, 1.0, 1e-9),
            Err(None)
        );
    }

    #[test]
    fn golden_finds_parabola_top() {
        let (x, v) = golden_max(&mut |x| -(x - 0.3) * (x - 0.3) + 2.0, -1.0, 1.0);
        assert!((x - 0.3).abs() < 1e-6 && (v - 2.0).abs() < 1e-12);
    }

    #[test]
    fn inverse_of_spd() {
        let a = vec![
            vec![4.0, 2.0, 0.6],
            vec![2.0, 2.0, 0.5],
            vec![0.6, 0.5, 3.0],
        ];
        let inv = spd_inverse(&a).unwrap();
        for i in 0..3 {
            for j in 0..3 {
                let p: f64 = (0..3).map(|k| a[i][k] * inv[k][j]).sum();
                let want = if i == j { 1.0 } else { 0.0 };
                assert!((p - want).abs() < 1e-12);
            }
        }
        assert!(spd_inverse(&[vec![1.0, 2.0], vec![2.0, 1.0]]).is_none());
    }

    #[test]
    fn hessian_of_quadratic_is_exact() {
        let mut f = |p: &[f64]| -(3.0 * p[0] * p[0] + 2.0 * p[0] * p[1] + p[1] * p[1]);
        let (g, h) = gradient_hessian(&mut f, &[1.0, -1.0], &[1e-3, 1e-3]).unwrap();
        assert!((g[0] + 4.0).abs() < 1e-8 && (g[1] - 0.0).abs() < 1e-8);
        assert!((h[0][0] + 6.0).abs() < 1e-6 && (h[0][1] + 2.0).abs() < 1e-6);
        let x = newton_polish(&mut f, &[1.0, -1.0], &[1e-3, 1e-3]);
        assert!(x[0].abs() < 1e-8 && x[1].abs() < 1e-8);
    }
}
