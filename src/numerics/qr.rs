//! The one QR factorisation of the project: R built a row at a time by Givens rotations, for
//! the linear fits ([`super::linear`]) and every Levenberg–Marquardt step ([`super::nonlinear`]),
//! never the normal equations (which square the condition number).

/// The triangular factor of a QR decomposition built one row at a time by Givens rotations:
/// R (p×p, upper) and Qᵀy, on the stack (Golub & Van Loan 2013, "Matrix Computations", §5.1.8
/// and §6.5.2). Orthogonal like Householder QR, and no n×p matrix is ever stored; the capacity
/// `N` lives on the stack (a factorisation is copied as forms are compared).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct GivensQr<const N: usize> {
    p: usize,
    r: [[f64; N]; N],
    qty: [f64; N],
}

// Triangular solves read best with explicit indices.
#[allow(clippy::needless_range_loop)]
impl<const N: usize> GivensQr<N> {
    /// An empty factorisation for `p` ≤ `N` columns.
    pub fn new(p: usize) -> Self {
        assert!(p <= N, "at most {N} parameters");
        GivensQr { p, r: [[0.0; N]; N], qty: [0.0; N] }
    }

    /// Rotates one row (x, z) of the system X β ≈ y into R and Qᵀy; entries of x past the
    /// p columns are ignored. (A fixed-size row: copying a slice of a few numbers would call
    /// memmove, 2 % of a campaign's analysis.)
    pub fn add_row(&mut self, mut row: [f64; N], mut z: f64) {
        for k in 0..self.p {
            let xk = row[k];
            if xk == 0.0 {
                continue;
            }
            let rkk = self.r[k][k];
            if rkk == 0.0 {
                self.r[k][k..self.p].copy_from_slice(&row[k..self.p]);
                self.qty[k] = z;
                return;
            }
            // √(a² + b²) directly is several times faster than libm's hypot; hypot only where
            // the squares would overflow or underflow.
            let h = match (rkk * rkk + xk * xk).sqrt() {
                h if h.is_normal() && h < 1e150 && h > 1e-150 => h,
                _ => rkk.hypot(xk),
            };
            let (c, s) = (rkk / h, xk / h);
            for j in k..self.p {
                let (a, b) = (self.r[k][j], row[j]);
                self.r[k][j] = c * a + s * b;
                row[j] = -s * a + c * b;
            }
            let q = self.qty[k];
            self.qty[k] = c * q + s * z;
            z = -s * q + c * z;
        }
    }

    /// Diagonal of R.
    pub fn diagonal(&self, k: usize) -> f64 {
        self.r[k][k]
    }

    /// Solves R β = Qᵀy.
    pub fn solve(&self) -> [f64; N] {
        let mut beta = [0.0; N];
        for i in (0..self.p).rev() {
            let tail: f64 = (i + 1..self.p).map(|j| self.r[i][j] * beta[j]).sum();
            beta[i] = (self.qty[i] - tail) / self.r[i][i];
        }
        beta
    }

    /// (RᵀR)⁻¹ = R⁻¹R⁻ᵀ, row-major p×p.
    pub fn inverse_gram(&self) -> [[f64; N]; N] {
        let p = self.p;
        // R⁻¹ column by column (upper triangular).
        let mut inv = [[0.0; N]; N];
        for col in 0..p {
            for i in (0..=col).rev() {
                let unit = if i == col { 1.0 } else { 0.0 };
                let tail: f64 = (i + 1..=col).map(|j| self.r[i][j] * inv[j][col]).sum();
                inv[i][col] = (unit - tail) / self.r[i][i];
            }
        }
        let mut out = [[0.0; N]; N];
        for i in 0..p {
            for j in 0..p {
                out[i][j] = (i.max(j)..p).map(|k| inv[i][k] * inv[j][k]).sum();
            }
        }
        out
    }

    /// ‖R⁻ᵀ x‖², the leverage of a row x of the (scaled) design.
    pub fn leverage(&self, x: &[f64]) -> f64 {
        let mut v = [0.0; N];
        for i in 0..self.p {
            let head: f64 = (0..i).map(|k| self.r[k][i] * v[k]).sum();
            v[i] = (x[i] - head) / self.r[i][i];
        }
        v[..self.p].iter().map(|a| a * a).sum()
    }
}
