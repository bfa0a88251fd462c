//! Eigenvalues of a small dense real matrix: balancing, reduction to upper
//! Hessenberg form by stabilised elimination, then the shifted double-step
//! QR iteration (the textbook Francis algorithm, as in the classic
//! balance / elmhes / hqr sequence of the numerical-methods literature).
//!
//! The QR iteration is backward stable: an eigenvalue is found to about
//! eps·‖M‖ absolutely, which says little about one far smaller than ‖M‖
//! (a slow pole beside a fast one). [`eigenvalues_wide`] therefore also
//! takes the eigenvalues of M⁻¹, whose largest are the smallest of M and
//! come out to their own relative precision.

use crate::num::dense::{Lu, Mat};
use num_complex::Complex64 as C64;

/// Most QR sweeps per eigenvalue before giving up.
const MAX_ITERATIONS: usize = 60;

/// Scale rows and columns by powers of 2 so each row and column of the
/// off-diagonal part has a similar norm (the eigenvalues do not change).
fn balance(a: &mut Mat) {
    const RADIX: f64 = 2.0;
    let n = a.rows;
    let mut done = false;
    while !done {
        done = true;
        for i in 0..n {
            let (mut r, mut c) = (0.0, 0.0);
            for j in (0..n).filter(|&j| j != i) {
                c += a[(j, i)].abs();
                r += a[(i, j)].abs();
            }
            if c == 0.0 || r == 0.0 {
                continue;
            }
            let s = c + r;
            let mut f = 1.0;
            while c < r / RADIX {
                f *= RADIX;
                c *= RADIX * RADIX;
            }
            while c > r * RADIX {
                f /= RADIX;
                c /= RADIX * RADIX;
            }
            if (c + r) / f < 0.95 * s {
                done = false;
                for j in 0..n {
                    a[(i, j)] /= f;
                    a[(j, i)] *= f;
                }
            }
        }
    }
}

/// Reduce to upper Hessenberg form by Gaussian elimination with pivoting
/// (a similarity transform); entries below the subdiagonal are zeroed.
fn hessenberg(a: &mut Mat) {
    let n = a.rows;
    for m in 1..n.saturating_sub(1) {
        let mut x = 0.0f64;
        let mut piv = m;
        for j in m..n {
            if a[(j, m - 1)].abs() > x.abs() {
                x = a[(j, m - 1)];
                piv = j;
            }
        }
        if piv != m {
            for j in m - 1..n {
                let t = a[(piv, j)];
                a[(piv, j)] = a[(m, j)];
                a[(m, j)] = t;
            }
            for j in 0..n {
                let t = a[(j, piv)];
                a[(j, piv)] = a[(j, m)];
                a[(j, m)] = t;
            }
        }
        if x == 0.0 {
            continue;
        }
        for i in m + 1..n {
            let y = a[(i, m - 1)] / x;
            if y == 0.0 {
                continue;
            }
            a[(i, m - 1)] = 0.0;
            for j in m..n {
                a[(i, j)] -= y * a[(m, j)];
            }
            for j in 0..n {
                a[(j, m)] += y * a[(j, i)];
            }
        }
    }
}

/// The lowest l ≤ nn such that the subdiagonal entry a[l][l−1] is
/// negligible (set to zero), or 0.
fn split_point(a: &mut Mat, nn: usize, anorm: f64) -> usize {
    let mut l = nn;
    while l > 0 {
        let mut s = a[(l - 1, l - 1)].abs() + a[(l, l)].abs();
        if s == 0.0 {
            s = anorm;
        }
        if a[(l, l - 1)].abs() <= f64::EPSILON * s {
            a[(l, l - 1)] = 0.0;
            break;
        }
        l -= 1;
    }
    l
}

/// The eigenvalues of the trailing 2×2 block at nn−1, nn (shift t added).
fn pair(a: &Mat, nn: usize, t: f64) -> [C64; 2] {
    let x = a[(nn, nn)];
    let y = a[(nn - 1, nn - 1)];
    let w = a[(nn, nn - 1)] * a[(nn - 1, nn)];
    let p = 0.5 * (y - x);
    let q = p * p + w;
    let z = q.abs().sqrt();
    let x = x + t;
    if q >= 0.0 {
        let z = p + z.copysign(p);
        let lo = if z != 0.0 { x - w / z } else { x + z };
        [C64::new(x + z, 0.0), C64::new(lo, 0.0)]
    } else {
        [C64::new(x + p, z), C64::new(x + p, -z)]
    }
}

/// Where the double-shift sweep starts (m ≥ l) and its first column
/// (p, q, r), for the shifts given by x, y, w.
fn sweep_start(a: &Mat, l: usize, nn: usize, (x, y, w): (f64, f64, f64)) -> (usize, [f64; 3]) {
    let mut m = nn - 2;
    loop {
        let z = a[(m, m)];
        let (r, s) = (x - z, y - z);
        let p = (r * s - w) / a[(m + 1, m)] + a[(m, m + 1)];
        let q = a[(m + 1, m + 1)] - z - r - s;
        let r = a[(m + 2, m + 1)];
        let s = p.abs() + q.abs() + r.abs();
        let (p, q, r) = (p / s, q / s, r / s);
        if m == l {
            return (m, [p, q, r]);
        }
        let u = a[(m, m - 1)].abs() * (q.abs() + r.abs());
        let v = p.abs() * (a[(m - 1, m - 1)].abs() + z.abs() + a[(m + 1, m + 1)].abs());
        if u <= f64::EPSILON * v {
            return (m, [p, q, r]);
        }
        m -= 1;
    }
}

/// One Householder reflector of the double-shift sweep at column k.
fn reflect(a: &mut Mat, (l, m, k, nn): (usize, usize, usize, usize), pqr: [f64; 3], norm: f64) {
    let [mut p, mut q, mut r] = pqr;
    let s = (p * p + q * q + r * r).sqrt().copysign(p);
    if s == 0.0 {
        return;
    }
    if k == m {
        if l != m {
            a[(k, k - 1)] = -a[(k, k - 1)];
        }
    } else {
        a[(k, k - 1)] = -s * norm;
    }
    p += s;
    let (x, y, z) = (p / s, q / s, r / s);
    q /= p;
    r /= p;
    for j in k..=nn {
        let mut p = a[(k, j)] + q * a[(k + 1, j)];
        if k + 1 != nn {
            p += r * a[(k + 2, j)];
            a[(k + 2, j)] -= p * z;
        }
        a[(k + 1, j)] -= p * y;
        a[(k, j)] -= p * x;
    }
    for i in l..=nn.min(k + 3) {
        let mut p = x * a[(i, k)] + y * a[(i, k + 1)];
        if k + 1 != nn {
            p += z * a[(i, k + 2)];
            a[(i, k + 2)] -= p * r;
        }
        a[(i, k + 1)] -= p * q;
        a[(i, k)] -= p;
    }
}

/// One double-shift QR sweep on the active block l..=nn.
fn qr_sweep(a: &mut Mat, l: usize, nn: usize, shifts: (f64, f64, f64)) {
    let (m, first) = sweep_start(a, l, nn, shifts);
    for i in m + 2..=nn {
        a[(i, i - 2)] = 0.0;
        if i != m + 2 {
            a[(i, i - 3)] = 0.0;
        }
    }
    for k in m..nn {
        let (pqr, norm) = if k == m {
            (first, 0.0)
        } else {
            let r = if k + 1 != nn { a[(k + 2, k - 1)] } else { 0.0 };
            let v = [a[(k, k - 1)], a[(k + 1, k - 1)], r];
            let x = v.iter().map(|e| e.abs()).sum::<f64>();
            if x != 0.0 {
                ([v[0] / x, v[1] / x, v[2] / x], x)
            } else {
                (v, x)
            }
        };
        reflect(a, (l, m, k, nn), pqr, norm);
    }
}

/// The eigenvalues of an upper Hessenberg matrix (destroyed); None when
/// the iteration does not converge.
fn hqr(a: &mut Mat) -> Option<Vec<C64>> {
    let n = a.rows;
    let mut anorm = 0.0;
    for i in 0..n {
        for j in i.saturating_sub(1)..n {
            anorm += a[(i, j)].abs();
        }
    }
    let mut out = Vec::with_capacity(n);
    let mut t = 0.0;
    let mut nn = n as isize - 1;
    while nn >= 0 {
        let top = nn as usize;
        let mut its = 0;
        loop {
            let l = split_point(a, top, anorm);
            if l == top {
                out.push(C64::new(a[(top, top)] + t, 0.0));
                nn -= 1;
                break;
            }
            if l + 1 == top {
                out.extend(pair(a, top, t));
                nn -= 2;
                break;
            }
            if its == MAX_ITERATIONS {
                return None;
            }
            let mut x = a[(top, top)];
            let mut y = a[(top - 1, top - 1)];
            let mut w = a[(top, top - 1)] * a[(top - 1, top)];
            if its > 0 && its % 10 == 0 {
                // An exceptional shift breaks a cycle.
                t += x;
                for i in 0..=top {
                    a[(i, i)] -= x;
                }
                let s = a[(top, top - 1)].abs() + a[(top - 1, top - 2)].abs();
                x = 0.75 * s;
                y = x;
                w = -0.4375 * s * s;
            }
            its += 1;
            qr_sweep(a, l, top, (x, y, w));
        }
    }
    Some(out)
}

/// The eigenvalues of a square real matrix (complex ones in conjugate
/// pairs); None when it is not finite or the iteration fails.
pub fn eigenvalues(m: &Mat) -> Option<Vec<C64>> {
    if m.rows != m.cols || !m.is_finite() {
        return None;
    }
    let mut a = m.clone();
    balance(&mut a);
    hessenberg(&mut a);
    hqr(&mut a)
}

/// The eigenvalues of M, each from where it is computed best: those above
/// the geometric middle of the spectrum's scale from M itself, the smaller
/// ones as the reciprocals of M⁻¹'s (when M is invertible). None when the
/// iteration fails.
pub fn eigenvalues_wide(m: &Mat) -> Option<Vec<C64>> {
    let direct = eigenvalues(m)?;
    let Some(inv) = Lu::factor(m).map(|lu| lu.solve_mat(&Mat::identity(m.rows))) else {
        return Some(direct);
    };
    let Some(of_inv) = eigenvalues(&inv) else {
        return Some(direct);
    };
    let split = (m.norm_inf() / inv.norm_inf()).sqrt();
    let mut out: Vec<C64> = direct.into_iter().filter(|l| l.norm() >= split).collect();
    out.extend(
        of_inv
            .into_iter()
            .filter(|u| *u != C64::new(0.0, 0.0))
            .map(|u| u.inv())
            .filter(|l| l.norm() < split),
    );
    Some(out)
}

#[cfg(test)]
mod tests {
    use super::*;

    fn sorted(mut v: Vec<C64>) -> Vec<C64> {
        v.sort_by(|a, b| a.re.total_cmp(&b.re).then(a.im.total_cmp(&b.im)));
        v
    }

    #[test]
    fn companion_matrix_roots() {
        // The companion matrix of (s+1)(s+2)(s²+2s+5) = s⁴+5s³+13s²+19s+10
        // has exactly those roots: −1, −2, −1±2j (textbook identity).
        let mut m = Mat::zeros(4, 4);
        m.a[..4].copy_from_slice(&[-5.0, -13.0, -19.0, -10.0]);
        for i in 1..4 {
            m[(i, i - 1)] = 1.0;
        }
        let got = sorted(eigenvalues(&m).unwrap());
        let want = [
            C64::new(-2.0, 0.0),
            C64::new(-1.0, -2.0),
            C64::new(-1.0, 0.0),
            C64::new(-1.0, 2.0),
        ];
        for (g, w) in got.iter().zip(want) {
            assert!((g - w).norm() < 1e-10, "{got:?}");
        }
    }

    #[test]
    fn widely_spread_triangular_spectrum() {
        // Upper triangular: the eigenvalues are the diagonal, 1e-14 to
        // 1e11 apart, one of them positive and tiny.
        let d = [-1e11, -3.0, 2e-14, -5e-9];
        let mut m = Mat::zeros(4, 4);
        for i in 0..4 {
            m[(i, i)] = d[i];
            for j in i + 1..4 {
                m[(i, j)] = 1e3 * (i + j) as f64;
            }
        }
        let got = sorted(eigenvalues_wide(&m).unwrap());
        let want = sorted(d.iter().map(|&x| C64::new(x, 0.0)).collect());
        assert_eq!(got.len(), 4);
        for (g, w) in got.iter().zip(&want) {
            assert!((g - w).norm() <= 1e-6 * w.norm(), "{got:?}");
        }
    }
}
