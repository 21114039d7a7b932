//! Least-squares speed on a large, well-conditioned design, as a table.
//!
//! Run with `cargo bench --bench least_squares`. The machines are shared and
//! noisy, so the bench reports each time beside a baseline measured in the
//! same run: nalgebra's plain Householder QR solve of the same problem
//! (no rank check, no leverage). Compare the ratio column between versions,
//! not the seconds.

use std::time::{Duration, Instant};

use nalgebra::{DMatrix, DVector};

#[path = "../examples/support/splitmix.rs"]
#[allow(dead_code)]
mod splitmix;
use splitmix::SplitMix64;

/// Rows and columns of the test design.
const SIZES: [(usize, usize); 2] = [(200_000, 10), (1_000_000, 20)];
const REPEATS: usize = 3;

/// A fixed pseudo-random design: an intercept and uniform columns, and a
/// response linear in them plus noise (splitmix64, fixed seed).
fn problem(n: usize, p: usize) -> (DMatrix<f64>, DVector<f64>) {
    let mut rng = SplitMix64::new(20261202);
    let mut uniform = move || rng.uniform();
    let x = DMatrix::from_fn(n, p, |_, j| if j == 0 { 1.0 } else { uniform() });
    let beta = DVector::from_fn(p, |j, _| j as f64 + 1.0);
    let noise = DVector::from_fn(n, |_, _| uniform() - 0.5);
    let y = &x * beta + noise;
    (x, y)
}

fn best<F: FnMut()>(mut f: F) -> Duration {
    (0..REPEATS)
        .map(|_| {
            let start = Instant::now();
            f();
            start.elapsed()
        })
        .min()
        .unwrap_or_default()
}

fn main() {
    println!(
        "{:>10} {:>4} {:>14} {:>14} {:>8}",
        "rows", "cols", "baseline s", "sheetfit s", "ratio"
    );
    for (n, p) in SIZES {
        let (x, y) = problem(n, p);
        let baseline = best(|| {
            let qr = x.clone().qr();
            let mut qty = y.clone();
            qr.q_tr_mul(&mut qty);
            let beta = qr.r().solve_upper_triangular(&qty.rows(0, p).into_owned());
            std::hint::black_box(beta);
        });
        let design = sheetfit::design::DesignMatrix::from_dense(&x, None);
        let ours = best(|| {
            std::hint::black_box(sheetfit::fit::least_squares(&design, &y));
        });
        println!(
            "{n:>10} {p:>4} {:>14.3} {:>14.3} {:>8.2}",
            baseline.as_secs_f64(),
            ours.as_secs_f64(),
            ours.as_secs_f64() / baseline.as_secs_f64()
        );
    }
}
