//! Small dense real matrices for the time-domain analysis: products, an LU
//! factorisation with partial pivoting, and the matrix exponential kept as
//! `e^{M·t} − I` (so slow modes, whose propagator is close to the identity
//! over a short step, keep their full relative precision).

/// A row-major `rows`×`cols` matrix.
#[derive(Debug, Clone, PartialEq)]
pub struct Mat {
    pub rows: usize,
    pub cols: usize,
    pub a: Vec<f64>,
}

impl std::ops::Index<(usize, usize)> for Mat {
    type Output = f64;
    fn index(&self, (i, j): (usize, usize)) -> &f64 {
        &self.a[i * self.cols + j]
    }
}

impl std::ops::IndexMut<(usize, usize)> for Mat {
    fn index_mut(&mut self, (i, j): (usize, usize)) -> &mut f64 {
        &mut self.a[i * self.cols + j]
    }
}

impl Mat {
    pub fn zeros(rows: usize, cols: usize) -> Mat {
        Mat {
            rows,
            cols,
            a: vec![0.0; rows * cols],
        }
    }

    pub fn identity(n: usize) -> Mat {
        let mut m = Mat::zeros(n, n);
        for i in 0..n {
            m[(i, i)] = 1.0;
        }
        m
    }

    pub fn row(&self, i: usize) -> &[f64] {
        &self.a[i * self.cols..(i + 1) * self.cols]
    }

    /// The product `self·o`.
    pub fn mul(&self, o: &Mat) -> Mat {
        debug_assert_eq!(self.cols, o.rows);
        let mut p = Mat::zeros(self.rows, o.cols);
        for i in 0..self.rows {
            for k in 0..self.cols {
                let x = self[(i, k)];
                if x == 0.0 {
                    continue;
                }
                let (src, dst) = (o.row(k), &mut p.a[i * o.cols..(i + 1) * o.cols]);
                for (d, s) in dst.iter_mut().zip(src) {
                    *d += x * s;
                }
            }
        }
        p
    }

    /// `y = self·x`.
    pub fn mul_vec_into(&self, x: &[f64], y: &mut [f64]) {
        for (i, yi) in y.iter_mut().enumerate().take(self.rows) {
            *yi = self.row(i).iter().zip(x).map(|(a, b)| a * b).sum();
        }
    }

    pub fn mul_vec(&self, x: &[f64]) -> Vec<f64> {
        let mut y = vec![0.0; self.rows];
        self.mul_vec_into(x, &mut y);
        y
    }

    /// The largest absolute row sum (the ∞-norm).
    pub fn norm_inf(&self) -> f64 {
        (0..self.rows)
            .map(|i| self.row(i).iter().map(|x| x.abs()).sum::<f64>())
            .fold(0.0, f64::max)
    }

    /// The submatrix on these rows and columns.
    pub fn select(&self, rows: &[usize], cols: &[usize]) -> Mat {
        let mut m = Mat::zeros(rows.len(), cols.len());
        for (i, &r) in rows.iter().enumerate() {
            for (j, &c) in cols.iter().enumerate() {
                m[(i, j)] = self[(r, c)];
            }
        }
        m
    }

    /// `self − o`.
    pub fn sub(&self, o: &Mat) -> Mat {
        Mat {
            rows: self.rows,
            cols: self.cols,
            a: self.a.iter().zip(&o.a).map(|(x, y)| x - y).collect(),
        }
    }

    /// Every entry times `k`.
    pub fn scaled(&self, k: f64) -> Mat {
        Mat {
            rows: self.rows,
            cols: self.cols,
            a: self.a.iter().map(|x| x * k).collect(),
        }
    }

    pub fn is_finite(&self) -> bool {
        self.a.iter().all(|x| x.is_finite())
    }
}

/// `P·A = L·U` of a square matrix.
pub struct Lu {
    n: usize,
    a: Vec<f64>,
    perm: Vec<usize>,
}

impl Lu {
    /// None when a pivot is exactly zero or not finite.
    pub fn factor(m: &Mat) -> Option<Lu> {
        debug_assert_eq!(m.rows, m.cols);
        let n = m.rows;
        let mut a = m.a.clone();
        let mut perm: Vec<usize> = (0..n).collect();
        for k in 0..n {
            let p = (k..n).max_by(|&i, &j| a[i * n + k].abs().total_cmp(&a[j * n + k].abs()))?;
            let best = a[p * n + k].abs();
            if best == 0.0 || !best.is_finite() {
                return None;
            }
            if p != k {
                for j in 0..n {
                    a.swap(p * n + j, k * n + j);
                }
                perm.swap(p, k);
            }
            let inv = 1.0 / a[k * n + k];
            for i in k + 1..n {
                let f = a[i * n + k] * inv;
                a[i * n + k] = f;
                if f != 0.0 {
                    for j in k + 1..n {
                        a[i * n + j] -= f * a[k * n + j];
                    }
                }
            }
        }
        Some(Lu { n, a, perm })
    }

    /// Solve `A·x = b`.
    pub fn solve(&self, b: &[f64]) -> Vec<f64> {
        let n = self.n;
        let a = &self.a;
        let mut x: Vec<f64> = self.perm.iter().map(|&p| b[p]).collect();
        for i in 0..n {
            let s: f64 = (0..i).map(|j| a[i * n + j] * x[j]).sum();
            x[i] -= s;
        }
        for i in (0..n).rev() {
            let s: f64 = (i + 1..n).map(|j| a[i * n + j] * x[j]).sum();
            x[i] = (x[i] - s) / a[i * n + i];
        }
        x
    }

    /// Solve `A·X = B` column by column.
    pub fn solve_mat(&self, b: &Mat) -> Mat {
        let mut x = Mat::zeros(b.rows, b.cols);
        for j in 0..b.cols {
            let col: Vec<f64> = (0..b.rows).map(|i| b[(i, j)]).collect();
            for (i, v) in self.solve(&col).into_iter().enumerate() {
                x[(i, j)] = v;
            }
        }
        x
    }
}

/// Taylor terms of `e^B − I` for ‖B‖∞ ≤ 1/2: the first omitted term is
/// below ‖B‖^19/19! ≤ 1.6e-23 relative, far under double rounding.
const TAYLOR_TERMS: usize = 18;

/// `e^{M·t} − I` by scaling and squaring. B = M·t/2^s with ‖B‖∞ ≤ 1/2 is
/// summed as a Taylor series (Horner form, truncation error above), then
/// doubled s times with [`double_step`]. Kept as the difference from the
/// identity, each doubling keeps the relative precision of modes whose
/// propagator is close to one.
pub fn expm1(m: &Mat, t: f64) -> Mat {
    let b = m.scaled(t);
    let norm = b.norm_inf();
    let s = if norm > 0.5 {
        (norm / 0.5).log2().ceil() as i32
    } else {
        0
    };
    let b = b.scaled(0.5f64.powi(s));
    // e^B − I = B·(I + B/2·(I + B/3·(… (I + B/n))))
    let n = b.rows;
    let mut acc = Mat::identity(n);
    for k in (2..=TAYLOR_TERMS).rev() {
        let mut next = b.mul(&acc).scaled(1.0 / k as f64);
        for i in 0..n {
            next[(i, i)] += 1.0;
        }
        acc = next;
    }
    let mut d = b.mul(&acc);
    for _ in 0..s {
        d = double_step(&d);
    }
    d
}

/// From D = e^{M·h} − I to e^{M·2h} − I = 2D + D².
pub fn double_step(d: &Mat) -> Mat {
    let mut out = d.mul(d);
    for (o, x) in out.a.iter_mut().zip(&d.a) {
        *o += 2.0 * x;
    }
    out
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn exponential_of_a_rotation_and_a_decay() {
        // e^{[[0, w], [−w, 0]]t} is a rotation by w·t (a textbook identity).
        let mut m = Mat::zeros(2, 2);
        m[(0, 1)] = 3.0;
        m[(1, 0)] = -3.0;
        let d = expm1(&m, 0.7);
        assert!((d[(0, 0)] + 1.0 - (2.1f64).cos()).abs() < 1e-14);
        assert!((d[(0, 1)] - (2.1f64).sin()).abs() < 1e-14);
        // A stiff diagonal: e^{−1e9·1e-6} underflows to 0, e^{−1e-3·1e-6}
        // − 1 keeps its digits.
        let mut m = Mat::zeros(2, 2);
        m[(0, 0)] = -1e9;
        m[(1, 1)] = -1e-3;
        let d = expm1(&m, 1e-6);
        assert!((d[(0, 0)] + 1.0).abs() < 1e-15);
        let want = (-1e-9f64).exp_m1();
        assert!((d[(1, 1)] - want).abs() < 1e-15 * want.abs());
    }

    #[test]
    fn lu_solves() {
        let mut m = Mat::zeros(3, 3);
        m.a = vec![0.0, 2.0, 1.0, 1.0, 1.0, 0.0, 3.0, 0.0, 1.0];
        let lu = Lu::factor(&m).unwrap();
        let x = lu.solve(&[5.0, 3.0, 6.0]);
        let back = m.mul_vec(&x);
        for (b, want) in back.iter().zip([5.0, 3.0, 6.0]) {
            assert!((b - want).abs() < 1e-12);
        }
        assert!(Lu::factor(&Mat::zeros(2, 2)).is_none());
    }
}
