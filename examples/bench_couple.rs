//! Speed benchmark of LM-FBS coupling: mortise's Rust core against numpy.
//!
//! Two components of 60 and 48 DOFs (symmetric, receptance-like random data
//! from a seeded counter-based generator that the Python side reproduces bit
//! for bit) are coupled rigidly over 12 interface DOFs on 6,400 lines. The
//! Rust core (`mortise::assemble::couple`, native threads) is timed, then
//! tests/py/bench_lmfbs.py times the same formula in numpy (stacked arrays,
//! matmul with the signed Boolean matrix, batched `np.linalg.solve`). Both
//! times, their ratio and the largest relative difference between the two
//! results (on every 100th line) are printed.
//!
//! Run: `cargo run --release --example bench_couple` (Python: $MORTISE_PYTHON,
//! else .venv/bin/python).

use mortise::assemble::{couple, couple_with_threads, default_threads, CouplingOptions, Joint};
use mortise::{Direction, Dof, FrfSet, Quantity};
use num_complex::Complex64;
use std::path::PathBuf;
use std::process::Command;
use std::time::Instant;

const LINES: usize = 6400;
const N_A: usize = 60;
const N_B: usize = 48;
const N_IF: usize = 12;
const SEED: u64 = 20261201;
/// Repetitions (best taken) of the Rust run and of the one-thread numpy run;
/// the two-thread numpy run, slow when the machine is shared, gets 2.
const REPS: usize = 5;
const SAMPLE: usize = 100;

fn splitmix(x: u64) -> u64 {
    let mut z = x.wrapping_add(0x9E37_79B9_7F4A_7C15);
    z = (z ^ (z >> 30)).wrapping_mul(0xBF58_476D_1CE4_E5B9);
    z = (z ^ (z >> 27)).wrapping_mul(0x94D0_49BB_1331_11EB);
    z ^ (z >> 31)
}

fn unit(z: u64) -> f64 {
    (z >> 11) as f64 * 2f64.powi(-53)
}

/// The same data as `component` in tests/py/bench_lmfbs.py.
fn component(c: u64, name: &str, n: usize) -> FrfSet {
    let dofs: Vec<Dof> = (0..n)
        .map(|i| Dof::new(name, &(i + 1).to_string(), Direction::Z))
        .collect();
    let freqs: Vec<f64> = (1..=LINES).map(|k| k as f64 * 0.5).collect();
    let mut s = FrfSet::zeros(
        name,
        freqs,
        dofs.clone(),
        dofs,
        Quantity::Displacement,
        Quantity::Force,
    );
    let nn = n as u64;
    for k in 0..LINES {
        let line = s.line_mut(k);
        for i in 0..n {
            for j in 0..n {
                let (lo, hi) = (i.min(j) as u64, i.max(j) as u64);
                let idx = ((c * LINES as u64 + k as u64) * nn + lo) * nn + hi;
                let base = SEED.wrapping_add(idx.wrapping_mul(2));
                let mut v = Complex64::new(
                    unit(splitmix(base)) - 0.5,
                    unit(splitmix(base.wrapping_add(1))) - 0.5,
                );
                if i == j {
                    v += Complex64::new(2.0, -1.0);
                }
                line[i * n + j] = v * 1e-6;
            }
        }
    }
    s
}

/// CPU time (user + system, all threads) of this process in seconds, from
/// /proc/self/stat (Linux; clock ticks of 1/100 s); NaN elsewhere.
fn cpu_seconds() -> f64 {
    let Ok(s) = std::fs::read_to_string("/proc/self/stat") else {
        return f64::NAN;
    };
    // fields after the command name in parentheses; utime and stime are fields 14 and 15
    let Some(rest) = s.rfind(')').map(|p| &s[p + 2..]) else {
        return f64::NAN;
    };
    let f: Vec<&str> = rest.split_whitespace().collect();
    let tick = |i: usize| {
        f.get(i)
            .and_then(|v| v.parse::<f64>().ok())
            .unwrap_or(f64::NAN)
    };
    (tick(11) + tick(12)) / 100.0
}

fn python() -> PathBuf {
    match std::env::var("MORTISE_PYTHON") {
        Ok(p) => PathBuf::from(p),
        Err(_) => PathBuf::from(env!("CARGO_MANIFEST_DIR")).join(".venv/bin/python"),
    }
}

fn main() {
    let root = PathBuf::from(env!("CARGO_MANIFEST_DIR"));
    let dir = root.join("target/bench-couple");
    std::fs::create_dir_all(&dir).expect("cannot create target/bench-couple");

    let a = component(0, "A", N_A);
    let b = component(1, "B", N_B);
    let joints: Vec<Joint> = (0..N_IF)
        .map(|r| {
            Joint::rigid(
                Dof::new("A", &(N_A - N_IF + r + 1).to_string(), Direction::Z),
                Dof::new("B", &(r + 1).to_string(), Direction::Z),
            )
        })
        .collect();
    let comps = [a, b];
    let opts = CouplingOptions::default();

    // `--rust-only`: time the Rust core and stop (for profiling)
    let rust_only = std::env::args().any(|a| a == "--rust-only");
    let threads = default_threads();
    let mut best = f64::INFINITY;
    let mut best_cpu = f64::INFINITY;
    let mut result = None;
    for _ in 0..REPS {
        drop(result.take());
        let t0 = Instant::now();
        let c0 = cpu_seconds();
        let r = couple(&comps, &joints, &opts).expect("coupling failed");
        best = best.min(t0.elapsed().as_secs_f64());
        best_cpu = best_cpu.min(cpu_seconds() - c0);
        result = Some(r);
    }
    let r = result.expect("no run");
    if rust_only {
        println!("mortise (Rust, {threads} threads, best of {REPS}): {best:.3} s wall, {best_cpu:.3} s CPU");
        return;
    }
    let t1 = Instant::now();
    let serial = couple_with_threads(&comps, &joints, &opts, 1).expect("coupling failed");
    let t_serial = t1.elapsed().as_secs_f64();
    assert_eq!(
        serial.set.data, r.set.data,
        "threaded and serial results differ"
    );
    drop(serial);

    // numpy with one and with two BLAS threads; the faster one is the reference
    let mut np_runs: Vec<(String, f64, f64)> = Vec::new();
    let mut np_version = String::from("?");
    for (blas_threads, reps) in [("1", REPS), ("2", 2)] {
        let out = Command::new(python())
            .arg(root.join("tests/py/bench_lmfbs.py"))
            .args([
                dir.to_str().expect("path"),
                &LINES.to_string(),
                &N_A.to_string(),
                &N_B.to_string(),
                &N_IF.to_string(),
                &SEED.to_string(),
                &reps.to_string(),
                &SAMPLE.to_string(),
            ])
            .env("OPENBLAS_NUM_THREADS", blas_threads)
            .env("OMP_NUM_THREADS", blas_threads)
            .output()
            .expect("cannot start Python (set MORTISE_PYTHON)");
        if !out.status.success() {
            eprintln!("{}", String::from_utf8_lossy(&out.stderr));
            std::process::exit(1);
        }
        let v: serde_json::Value =
            serde_json::from_slice(&out.stdout).expect("bench_lmfbs.py printed no JSON");
        np_version = v["numpy"].as_str().unwrap_or("?").to_string();
        np_runs.push((
            format!("{blas_threads} BLAS thread(s), best of {reps}"),
            v["seconds"].as_f64().expect("seconds"),
            v["cpu_seconds"].as_f64().unwrap_or(f64::NAN),
        ));
    }
    let t_np = np_runs.iter().map(|r| r.1).fold(f64::INFINITY, f64::min);
    let c_np = np_runs.iter().map(|r| r.2).fold(f64::INFINITY, f64::min);

    // compare the sampled lines
    let bytes = std::fs::read(dir.join("numpy_samples.bin")).expect("samples");
    let n = N_A + N_B;
    let per = n * n;
    let mut worst: f64 = 0.0;
    let mut count = 0;
    for (s, k) in (0..LINES).step_by(SAMPLE).enumerate() {
        let line = r.set.line(k);
        let mut scale: f64 = 0.0;
        let mut diff: f64 = 0.0;
        for (e, v) in line.iter().enumerate() {
            let o = (s * per + e) * 16;
            let re = f64::from_le_bytes(bytes[o..o + 8].try_into().expect("8 bytes"));
            let im = f64::from_le_bytes(bytes[o + 8..o + 16].try_into().expect("8 bytes"));
            let w = Complex64::new(re, im);
            scale = scale.max(w.norm());
            diff = diff.max((v - w).norm());
        }
        worst = worst.max(diff / scale);
        count += 1;
    }
    let cmax = r.condition.iter().cloned().fold(0.0, f64::max);

    println!(
        "LM-FBS: {N_A} + {N_B} DOFs, {N_IF} rigid interface DOFs, {LINES} lines ({} × {} result per line)",
        r.set.n_out(),
        r.set.n_in()
    );
    println!(
        "mortise (Rust, {threads} threads, best of {REPS}): {best:.3} s wall, {best_cpu:.2} s CPU"
    );
    println!("mortise (Rust, 1 thread, one run): {t_serial:.3} s wall");
    for (t, secs, cpu) in &np_runs {
        println!(
            "numpy {np_version} (stacked matmul + batched solve; {t}): {secs:.3} s wall, {cpu:.2} s CPU"
        );
    }
    println!(
        "ratio numpy / mortise, wall clock (faster numpy run): {:.2}",
        t_np / best
    );
    println!(
        "ratio numpy / mortise, CPU time (least numpy CPU): {:.2}",
        c_np / best_cpu
    );
    println!("max relative difference on {count} sampled lines: {worst:.2e}");
    println!("largest interface condition number: {cmax:.3e}");
}
