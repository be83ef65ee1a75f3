//! Passes over the rows: loss and gradient, Hessian-vector products and the information
//! matrix. Each pass splits the rows into fixed chunks, works on the chunks in parallel and
//! adds the chunk results in chunk order, so results do not depend on the thread count.

use rayon::prelude::*;

use super::super::matrix::Matrix;
use super::{sigmoid, softplus};

/// Rows per parallel work item; fixed so the summation order is fixed.
pub const CHUNK_ROWS: usize = 1024;

/// The data and scaling a fit works on. Coefficients `beta` live on the standardised scale
/// and are mapped to raw-scale weights so the matrix is never copied.
pub struct Design<'a> {
    x: &'a Matrix,
    y: &'a [f32],
    weights: Option<&'a [f32]>,
    means: &'a [f64],
    scales: &'a [f64],
    free: &'a [bool],
    total_weight: f64,
    /// Whether Hessian products may run in single precision (see `hessian_times`).
    single_precision: bool,
}

/// Largest |mean| / spread of a column for which Hessian products run in single precision:
/// a product sums raw values and removes the means afterwards, so its rounding error grows
/// with this ratio (100 keeps it near 1e-5 relative; our own margin).
const SINGLE_PRECISION_MAX_MEAN_RATIO: f64 = 100.0;

/// Dot product of a feature row with raw-scale weights, with four accumulators so the
/// compiler can keep several additions in flight.
#[inline]
fn dot(row: &[f32], u: &[f64]) -> f64 {
    let mut acc = [0.0f64; 4];
    let mut rc = row.chunks_exact(4);
    let mut uc = u.chunks_exact(4);
    for (r, w) in (&mut rc).zip(&mut uc) {
        for k in 0..4 {
            acc[k] += f64::from(r[k]) * w[k];
        }
    }
    let mut tail = 0.0;
    for (r, w) in rc.remainder().iter().zip(uc.remainder()) {
        tail += f64::from(*r) * w;
    }
    // Opaque to the optimiser, as in `dot_f32`.
    let acc = std::hint::black_box(acc);
    (acc[0] + acc[1]) + (acc[2] + acc[3]) + tail
}

#[inline]
fn axpy(out: &mut [f64], a: f64, row: &[f32]) {
    for (o, &v) in out.iter_mut().zip(row) {
        *o += a * f64::from(v);
    }
}

/// [`dot`] in single precision: two sets of four lanes (one SSE register each), summed lane
/// by lane at the end, a shape the compiler turns into packed multiplies and adds.
#[inline]
fn dot_f32(row: &[f32], u: &[f32]) -> f32 {
    let mut lo = [0.0f32; 4];
    let mut hi = [0.0f32; 4];
    let mut rc = row.chunks_exact(8);
    let mut uc = u.chunks_exact(8);
    for (r, w) in (&mut rc).zip(&mut uc) {
        for k in 0..4 {
            lo[k] += r[k] * w[k];
            hi[k] += r[k + 4] * w[k + 4];
        }
    }
    let mut tail = 0.0;
    for (r, w) in rc.remainder().iter().zip(uc.remainder()) {
        tail += r * w;
    }
    // Opaque to the optimiser: otherwise it arranges the loop's lanes for this final sum and
    // pays lane shuffles on every iteration.
    let (lo, hi) = std::hint::black_box((lo, hi));
    let s: [f32; 4] = std::array::from_fn(|k| lo[k] + hi[k]);
    (s[0] + s[1]) + (s[2] + s[3]) + tail
}

/// [`axpy`] in single precision.
#[inline]
fn axpy_f32(out: &mut [f32], a: f32, row: &[f32]) {
    for (o, &v) in out.iter_mut().zip(row) {
        *o += a * v;
    }
}

impl<'a> Design<'a> {
    /// Wraps validated data.
    pub fn new(
        x: &'a Matrix,
        y: &'a [f32],
        weights: Option<&'a [f32]>,
        means: &'a [f64],
        scales: &'a [f64],
        free: &'a [bool],
    ) -> Self {
        let total_weight =
            weights.map_or(x.n_rows() as f64, |w| w.iter().map(|&v| f64::from(v)).sum());
        let single_precision = (0..x.n_cols())
            .filter(|&j| free[j])
            .all(|j| means[j].abs() <= SINGLE_PRECISION_MAX_MEAN_RATIO * scales[j]);
        Self {
            x,
            y,
            weights,
            means,
            scales,
            free,
            total_weight,
            single_precision,
        }
    }

    /// Number of coefficients (columns).
    pub fn n_cols(&self) -> usize {
        self.x.n_cols()
    }

    /// Rows in total.
    pub fn n_rows(&self) -> usize {
        self.x.n_rows()
    }

    /// Weighted mean of the labels.
    pub fn mean_label(&self) -> f64 {
        let s: f64 = (0..self.n_rows())
            .map(|i| self.weight(i) * f64::from(self.y[i]))
            .sum();
        s / self.total_weight
    }

    #[inline]
    fn weight(&self, i: usize) -> f64 {
        self.weights.map_or(1.0, |w| f64::from(w[i]))
    }

    fn chunks(&self) -> usize {
        self.n_rows().div_ceil(CHUNK_ROWS)
    }

    /// Maps a standardised-scale direction (last entry = intercept) to raw-scale weights and
    /// offset: z = x·u + c.
    fn to_raw(&self, v: &[f64]) -> (Vec<f64>, f64) {
        let p = self.n_cols();
        let u: Vec<f64> = (0..p)
            .map(|j| {
                if self.free[j] {
                    v[j] / self.scales[j]
                } else {
                    0.0
                }
            })
            .collect();
        let c = v[p] - (0..p).map(|j| self.means[j] * u[j]).sum::<f64>();
        (u, c)
    }

    /// Maps raw sums (Σ aᵢxᵢ, Σ aᵢ) back to the standardised coordinates.
    fn raw_sums_to_standardised(&self, raw: &[f64], total: f64) -> Vec<f64> {
        let p = self.n_cols();
        let mut g: Vec<f64> = (0..p)
            .map(|j| {
                if self.free[j] {
                    (raw[j] - self.means[j] * total) / self.scales[j]
                } else {
                    0.0
                }
            })
            .collect();
        g.push(total);
        g
    }

    /// Mean weighted log loss and its gradient at `theta` (standardised coefficients, then
    /// the intercept), without the penalty; writes each row's curvature wᵢpᵢ(1−pᵢ)/W.
    pub fn loss_and_gradient(&self, theta: &[f64], curvature: &mut [f64]) -> (f64, Vec<f64>) {
        let p = self.n_cols();
        let (u, c) = self.to_raw(theta);
        let inv_w = 1.0 / self.total_weight;
        let partials: Vec<Vec<f64>> = curvature
            .par_chunks_mut(CHUNK_ROWS)
            .enumerate()
            .map(|(chunk, curv)| {
                // Layout: raw gradient (p), Σ residual, loss.
                let mut acc = vec![0.0; p + 2];
                let lo = chunk * CHUNK_ROWS;
                for (k, d) in curv.iter_mut().enumerate() {
                    let i = lo + k;
                    let row = self.x.row(i);
                    let z = dot(row, &u) + c;
                    let w = self.weight(i) * inv_w;
                    let y = f64::from(self.y[i]);
                    let prob = sigmoid(z);
                    acc[p + 1] += w * (softplus(z) - y * z);
                    let r = w * (prob - y);
                    *d = w * prob * (1.0 - prob);
                    if r != 0.0 {
                        axpy(&mut acc[..p], r, row);
                    }
                    acc[p] += r;
                }
                acc
            })
            .collect();
        let total = sum_in_order(&partials, p + 2);
        (
            total[p + 1],
            self.raw_sums_to_standardised(&total[..p], total[p]),
        )
    }

    /// Hessian of the mean loss (no penalty) times `v`, using the curvature of the last
    /// `loss_and_gradient` call.
    ///
    /// The products and each chunk's sums are in single precision (twice the lanes per
    /// instruction; chunks are added in double) unless a column's mean is far from zero
    /// relative to its spread. This product only steers the inner conjugate-gradient solve,
    /// which stops at a residual of a tenth of the gradient, so a relative error of about
    /// 1e-5 changes the steps negligibly; the gradient, which decides convergence and where
    /// the fit stops, stays in double precision.
    pub fn hessian_times(&self, curvature: &[f64], v: &[f64]) -> Vec<f64> {
        let p = self.n_cols();
        let (u, c) = self.to_raw(v);
        // Raw-scale directions of standardised columns can exceed f32's range only for
        // columns of tiny spread; keep double precision then.
        let u_single: Option<Vec<f32>> = self
            .single_precision
            .then(|| {
                u.iter()
                    .map(|&w| {
                        let w32 = w as f32;
                        w32.is_finite().then_some(w32)
                    })
                    .collect()
            })
            .flatten();
        let partials: Vec<Vec<f64>> = curvature
            .par_chunks(CHUNK_ROWS)
            .enumerate()
            .map(|(chunk, curv)| {
                let mut acc = vec![0.0; p + 1];
                let lo = chunk * CHUNK_ROWS;
                match &u_single {
                    Some(u_single) => {
                        let mut acc32 = vec![0.0f32; p];
                        for (k, &d) in curv.iter().enumerate() {
                            if d == 0.0 {
                                continue;
                            }
                            let row = self.x.row(lo + k);
                            let q = d * (f64::from(dot_f32(row, u_single)) + c);
                            axpy_f32(&mut acc32, q as f32, row);
                            acc[p] += q;
                        }
                        for (a, &b) in acc.iter_mut().zip(&acc32) {
                            *a = f64::from(b);
                        }
                    }
                    None => {
                        for (k, &d) in curv.iter().enumerate() {
                            if d == 0.0 {
                                continue;
                            }
                            let row = self.x.row(lo + k);
                            let q = d * (dot(row, &u) + c);
                            axpy(&mut acc[..p], q, row);
                            acc[p] += q;
                        }
                    }
                }
                acc
            })
            .collect();
        debug_assert_eq!(partials.len(), self.chunks());
        let total = sum_in_order(&partials, p + 1);
        self.raw_sums_to_standardised(&total[..p], total[p])
    }
}

fn sum_in_order(partials: &[Vec<f64>], len: usize) -> Vec<f64> {
    let mut total = vec![0.0; len];
    for part in partials {
        for (t, v) in total.iter_mut().zip(part) {
            *t += v;
        }
    }
    total
}

/// Observed information Σ wᵢpᵢ(1−pᵢ)·x̃ᵢx̃ᵢᵀ on the raw scale, x̃ = (1, x_free); row-major
/// `(k × k)` with `k = free.len() + 1`. `u`, `c`: raw-scale weights and offset.
pub fn information_matrix(
    x: &Matrix,
    weights: Option<&[f32]>,
    u: &[f64],
    c: f64,
    free: &[usize],
) -> Vec<f64> {
    let k = free.len() + 1;
    let n = x.n_rows();
    let partials: Vec<Vec<f64>> = (0..n.div_ceil(CHUNK_ROWS))
        .into_par_iter()
        .map(|chunk| {
            let mut acc = vec![0.0; k * k];
            let mut xt = vec![0.0; k];
            for i in chunk * CHUNK_ROWS..((chunk + 1) * CHUNK_ROWS).min(n) {
                let row = x.row(i);
                let prob = sigmoid(dot(row, u) + c);
                let d = weights.map_or(1.0, |w| f64::from(w[i])) * prob * (1.0 - prob);
                xt[0] = 1.0;
                for (a, &j) in free.iter().enumerate() {
                    xt[a + 1] = f64::from(row[j]);
                }
                for r in 0..k {
                    let dr = d * xt[r];
                    for s in 0..=r {
                        acc[r * k + s] += dr * xt[s];
                    }
                }
            }
            acc
        })
        .collect();
    let mut info = sum_in_order(&partials, k * k);
    for r in 0..k {
        for s in 0..r {
            info[s * k + r] = info[r * k + s];
        }
    }
    info
}

#[cfg(test)]
mod tests {
    use super::*;
    use rand::{Rng, SeedableRng};
    use rand_chacha::ChaCha8Rng;

    /// Σᵢ dᵢ x̃ᵢ (x̃ᵢ·v) written out in double precision on explicitly standardised rows
    /// x̃ = ((x − mean) / scale, 1): the product `hessian_times` computes without forming x̃.
    fn hessian_times_by_hand(
        x: &Matrix,
        curvature: &[f64],
        means: &[f64],
        scales: &[f64],
        v: &[f64],
    ) -> Vec<f64> {
        let p = x.n_cols();
        let mut out = vec![0.0; p + 1];
        for (i, &d) in curvature.iter().enumerate() {
            let mut row: Vec<f64> = (0..p)
                .map(|j| (f64::from(x.row(i)[j]) - means[j]) / scales[j])
                .collect();
            row.push(1.0);
            let q = d * row.iter().zip(v).map(|(a, b)| a * b).sum::<f64>();
            for (o, r) in out.iter_mut().zip(&row) {
                *o += q * r;
            }
        }
        out
    }

    fn case(offset: f32) -> (Matrix, Vec<f64>, Vec<f64>, Vec<f64>, Vec<f64>) {
        let (n, p) = (3000, 37);
        let mut rng = ChaCha8Rng::seed_from_u64(5);
        // Counts, a share column every fifth, and column 0 shifted by `offset`.
        let values: Vec<f32> = (0..n * p)
            .map(|k| {
                let count = (rng.r#gen::<f32>() * 6.0).floor() * f32::from(rng.gen_bool(0.4));
                match k % p {
                    0 => offset + count,
                    j if j % 5 == 3 => count / 7.0,
                    _ => count,
                }
            })
            .collect();
        let x = Matrix::new(n, p, values).unwrap();
        let means: Vec<f64> = (0..p)
            .map(|j| (0..n).map(|i| f64::from(x.row(i)[j])).sum::<f64>() / n as f64)
            .collect();
        let scales: Vec<f64> = (0..p)
            .map(|j| {
                let var = (0..n)
                    .map(|i| (f64::from(x.row(i)[j]) - means[j]).powi(2))
                    .sum::<f64>()
                    / n as f64;
                var.sqrt()
            })
            .collect();
        let curvature: Vec<f64> = (0..n)
            .map(|_| rng.r#gen::<f64>() * 0.25 / n as f64)
            .collect();
        let v: Vec<f64> = (0..=p).map(|_| rng.r#gen::<f64>() - 0.5).collect();
        (x, means, scales, curvature, v)
    }

    #[test]
    fn single_precision_hessian_products_match_double_precision_by_hand() {
        // Count columns (means within a few spreads of zero): the single-precision path, whose
        // error must stay near 1e-5 of the product's size.
        let (x, means, scales, curvature, v) = case(0.0);
        let y = vec![0.0f32; x.n_rows()];
        let free = vec![true; x.n_cols()];
        let design = Design::new(&x, &y, None, &means, &scales, &free);
        assert!(design.single_precision);
        let got = design.hessian_times(&curvature, &v);
        let want = hessian_times_by_hand(&x, &curvature, &means, &scales, &v);
        let size = want.iter().fold(0.0f64, |m, w| m.max(w.abs()));
        for (g, w) in got.iter().zip(&want) {
            assert!((g - w).abs() <= 1e-5 * size, "{g} vs {w}");
        }
        // A column far from zero for its spread (a score near 10,000): double precision,
        // as exact as the by-hand sum.
        let (x, means, scales, curvature, v) = case(10_000.0);
        let design = Design::new(&x, &y, None, &means, &scales, &free);
        assert!(!design.single_precision);
        let got = design.hessian_times(&curvature, &v);
        let want = hessian_times_by_hand(&x, &curvature, &means, &scales, &v);
        let size = want.iter().fold(0.0f64, |m, w| m.max(w.abs()));
        for (g, w) in got.iter().zip(&want) {
            assert!((g - w).abs() <= 1e-10 * size, "{g} vs {w}");
        }
    }

    #[test]
    fn loss_and_gradient_match_the_standardised_sums_by_hand() {
        // Mean log loss Σ softplus(z) − y·z over n and its gradient Σ (p − y)·x̃ / n on
        // explicitly standardised rows, in double precision: the pass, which never
        // standardises the matrix, must give the same.
        let (x, means, scales, _, theta) = case(0.0);
        let n = x.n_rows();
        let p = x.n_cols();
        let mut rng = ChaCha8Rng::seed_from_u64(9);
        let y: Vec<f32> = (0..n).map(|_| f32::from(rng.gen_bool(0.3))).collect();
        let free = vec![true; p];
        let design = Design::new(&x, &y, None, &means, &scales, &free);
        let mut curvature = vec![0.0; n];
        let (loss, grad) = design.loss_and_gradient(&theta, &mut curvature);
        let mut want_loss = 0.0;
        let mut want_grad = vec![0.0; p + 1];
        for i in 0..n {
            let mut row: Vec<f64> = (0..p)
                .map(|j| (f64::from(x.row(i)[j]) - means[j]) / scales[j])
                .collect();
            row.push(1.0);
            let z: f64 = row.iter().zip(&theta).map(|(a, b)| a * b).sum();
            let yi = f64::from(y[i]);
            want_loss += (z.exp().ln_1p() - yi * z) / n as f64;
            let prob = 1.0 / (1.0 + (-z).exp());
            for (g, r) in want_grad.iter_mut().zip(&row) {
                *g += (prob - yi) * r / n as f64;
            }
            let c = prob * (1.0 - prob) / n as f64;
            assert!((curvature[i] - c).abs() <= 1e-12 * c.max(1e-300));
        }
        assert!((loss - want_loss).abs() < 1e-12 * want_loss.abs());
        let size = want_grad.iter().fold(0.0f64, |m, g| m.max(g.abs()));
        for (g, w) in grad.iter().zip(&want_grad) {
            assert!((g - w).abs() <= 1e-10 * size, "{g} vs {w}");
        }
    }
}
