//! Benchmark: the filament kernel (mutual inductance with its gradient) one pair at a time
//! against the batched form, on the pairs of an invented tube of two layers and 38 rings a side
//! (the workpiece block of a moving run), and checks that both give the same bits.
//!
//! Run with `cargo bench -p ringpulse-physics --bench kernel`; it prints the shortest time per
//! pair of 15 rounds (the shortest, because this machine's speed varies from minute to minute
//! and anything else only adds noise). Results are recorded in docs/performance.md.

use std::hint::black_box;
use std::time::Instant;

use ringpulse_physics::batch::{gradient_batch, GradientBatch};
use ringpulse_physics::filament::mutual_inductance_with_gradient;

fn main() {
    // 76 filaments (two layers of 38 rings, 0.79 mm apart, radii near 25 mm with a small
    // bulge), every distinct pair and the pair against the mirror image: 5700 pairs.
    let radius = |i: usize| 0.025375 + 0.00075 * (i % 2) as f64 + 1e-4 * (i as f64 * 0.1).sin();
    let mut pairs = Vec::new();
    for i in 0..76 {
        for j in i + 1..76 {
            let z = 0.00079 * ((j / 2) as f64 - (i / 2) as f64);
            pairs.push((radius(i), radius(j), z));
            pairs.push((radius(i), radius(j), z + 0.0003));
        }
    }
    let rounds = 15;
    let reps = 100;
    let per_pair = |t: Instant| t.elapsed().as_secs_f64() / (reps * pairs.len()) as f64 * 1e9;
    let (mut scalar, mut batched) = (f64::INFINITY, f64::INFINITY);
    let mut batch = GradientBatch::default();
    for &(a, b, z) in &pairs {
        batch.push(a, b, z);
    }
    for _ in 0..rounds {
        let t = Instant::now();
        for _ in 0..reps {
            for &(a, b, z) in &pairs {
                black_box(mutual_inductance_with_gradient(black_box(a), b, z));
            }
        }
        scalar = scalar.min(per_pair(t));
        let t = Instant::now();
        for _ in 0..reps {
            gradient_batch(black_box(&mut batch));
        }
        batched = batched.min(per_pair(t));
    }
    let same = pairs.iter().enumerate().all(|(i, &(a, b, z))| {
        let (x, y) = (batch.get(i), mutual_inductance_with_gradient(a, b, z));
        [(x.m, y.m), (x.dm_da, y.dm_da), (x.dm_db, y.dm_db), (x.dm_dz, y.dm_dz)]
            .iter()
            .all(|(p, q)| p.to_bits() == q.to_bits())
    });
    println!("filament kernel, {} tube pairs, shortest of {rounds} rounds", pairs.len());
    println!("  one pair at a time   {scalar:6.1} ns per pair");
    println!(
        "  batched              {batched:6.1} ns per pair ({:.1} times faster)",
        scalar / batched
    );
    println!("  same bits: {}", if same { "yes" } else { "NO" });
}
