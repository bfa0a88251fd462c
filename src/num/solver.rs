//! Dense complex LU factorisation with partial pivoting, sized for the small
//! modified-nodal matrices of one amplifier stage. One factorisation serves
//! any number of plain and transposed solves.

use num_complex::Complex64 as C64;

/// Largest system the engine builds (nodes plus voltage-source branches).
pub const MAXN: usize = 16;

pub type Vector = [C64; MAXN];
pub type Matrix = [[C64; MAXN]; MAXN];

pub const ZERO: C64 = C64 { re: 0.0, im: 0.0 };

#[inline]
fn l1(z: C64) -> f64 {
    z.re.abs() + z.im.abs()
}

/// The matrix is singular: a node has no path that fixes its voltage.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Singular;

/// An LU factorisation `P·A = L·U` (L unit lower, U upper, both kept in `a`).
pub struct Lu {
    n: usize,
    a: Matrix,
    perm: [usize; MAXN],
}

impl Lu {
    /// Factor the leading `n`×`n` block of `a`.
    pub fn factor(a: Matrix, n: usize) -> Result<Lu, Singular> {
        let mut lu = Lu {
            n,
            a,
            perm: [0; MAXN],
        };
        lu.factor_in_place(n)?;
        Ok(lu)
    }

    /// An all-zero workspace; fill [`Lu::matrix`], then [`Lu::factor_in_place`].
    pub fn zeroed() -> Lu {
        Lu {
            n: 0,
            a: [[ZERO; MAXN]; MAXN],
            perm: [0; MAXN],
        }
    }

    /// The matrix to be factored (overwritten by the factors).
    pub fn matrix(&mut self) -> &mut Matrix {
        &mut self.a
    }

    /// Factor the leading `n`×`n` block of [`Lu::matrix`] in place.
    pub fn factor_in_place(&mut self, n: usize) -> Result<(), Singular> {
        self.n = n;
        let a = &mut self.a;
        let perm = &mut self.perm;
        for (i, p) in perm.iter_mut().enumerate() {
            *p = i;
        }
        for k in 0..n {
            let mut p = k;
            let mut best = l1(a[k][k]);
            for (i, row) in a.iter().enumerate().take(n).skip(k + 1) {
                let m = l1(row[k]);
                if m > best {
                    best = m;
                    p = i;
                }
            }
            if best == 0.0 || !best.is_finite() {
                return Err(Singular);
            }
            if p != k {
                a.swap(p, k);
                perm.swap(p, k);
            }
            let inv = 1.0 / a[k][k];
            let (top, bottom) = a.split_at_mut(k + 1);
            let pivot = &top[k][k + 1..n];
            for row in bottom[..n - k - 1].iter_mut() {
                let f = row[k] * inv;
                if f == ZERO {
                    continue;
                }
                row[k] = f;
                for (r, p) in row[k + 1..n].iter_mut().zip(pivot) {
                    *r -= f * *p;
                }
            }
        }
        Ok(())
    }

    /// Solve `A·x = b`.
    pub fn solve(&self, b: &Vector) -> Vector {
        let (mut x, mut y) = ([ZERO; MAXN], [ZERO; MAXN]);
        self.solve_pair(b, &[ZERO; MAXN], &mut x, &mut y);
        x
    }

    /// Solve `A·x = b1` and `A·y = b2` in one pass over the factors.
    pub fn solve_pair(&self, b1: &Vector, b2: &Vector, x: &mut Vector, y: &mut Vector) {
        let n = self.n;
        for i in 0..n {
            let (mut s, mut t) = (b1[self.perm[i]], b2[self.perm[i]]);
            for ((l, xj), yj) in self.a[i][..i].iter().zip(&x[..i]).zip(&y[..i]) {
                s -= *l * *xj;
                t -= *l * *yj;
            }
            x[i] = s;
            y[i] = t;
        }
        for i in (0..n).rev() {
            let (mut s, mut t) = (x[i], y[i]);
            let row = &self.a[i];
            for ((u, xj), yj) in row[i + 1..n].iter().zip(&x[i + 1..n]).zip(&y[i + 1..n]) {
                s -= *u * *xj;
                t -= *u * *yj;
            }
            let inv = 1.0 / row[i];
            x[i] = s * inv;
            y[i] = t * inv;
        }
    }

    /// Solve `Aᵀ·z = e` with the same factors (the adjoint system).
    pub fn solve_transposed(&self, e: &Vector) -> Vector {
        let mut z = [ZERO; MAXN];
        self.solve_transposed_into(e, &mut z);
        z
    }

    /// [`Lu::solve_transposed`] into a caller's vector.
    pub fn solve_transposed_into(&self, e: &Vector, z: &mut Vector) {
        let n = self.n;
        let a = &self.a;
        // Uᵀ·t = e (forward), then Lᵀ·y = t (backward), then z = Pᵀ·y.
        let mut t = [ZERO; MAXN];
        for i in 0..n {
            let mut s = e[i];
            for j in 0..i {
                s -= a[j][i] * t[j];
            }
            t[i] = s / a[i][i];
        }
        for i in (0..n).rev() {
            let mut s = t[i];
            for j in i + 1..n {
                s -= a[j][i] * t[j];
            }
            t[i] = s;
        }
        for i in 0..n {
            z[self.perm[i]] = t[i];
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn c(re: f64, im: f64) -> C64 {
        C64::new(re, im)
    }

    #[test]
    fn solves_plain_and_transposed() {
        let mut a = [[ZERO; MAXN]; MAXN];
        let rows = [
            [c(0.0, 0.0), c(2.0, 1.0), c(1.0, 0.0)],
            [c(4.0, 0.0), c(1.0, -1.0), c(0.0, 2.0)],
            [c(1.0, 1.0), c(0.0, 0.0), c(3.0, 0.0)],
        ];
        for i in 0..3 {
            for j in 0..3 {
                a[i][j] = rows[i][j];
            }
        }
        let lu = Lu::factor(a, 3).unwrap();
        let mut b = [ZERO; MAXN];
        b[0] = c(1.0, 0.0);
        b[1] = c(0.0, 1.0);
        b[2] = c(2.0, -1.0);
        let x = lu.solve(&b);
        for i in 0..3 {
            let mut s = ZERO;
            for j in 0..3 {
                s += a[i][j] * x[j];
            }
            assert!((s - b[i]).norm() < 1e-12);
        }
        let z = lu.solve_transposed(&b);
        for i in 0..3 {
            let mut s = ZERO;
            for j in 0..3 {
                s += a[j][i] * z[j];
            }
            assert!((s - b[i]).norm() < 1e-12);
        }
    }

    #[test]
    fn singular_is_an_error() {
        let a = [[ZERO; MAXN]; MAXN];
        assert!(Lu::factor(a, 2).is_err());
    }
}
