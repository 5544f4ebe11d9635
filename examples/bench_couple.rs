//! Speed benchmark of LM-FBS coupling: mortise's Rust core against two numpy
//! versions and against the machine's limit.
//!
//! Two components of 60 and 48 DOFs (symmetric, receptance-like random data
//! from a seeded counter-based generator that the Python side reproduces bit
//! for bit) are coupled rigidly over 12 interface DOFs on 6,400 lines. The
//! Rust core (`mortise::assemble::couple`, native threads) is timed, then
//! tests/py/bench_lmfbs.py times the same formula in numpy two ways (stacked
//! matmul with the signed Boolean matrix; and indexed interface rows and
//! columns with the update written in place, the strongest plain numpy we
//! know) and measures the complex matrix-product rate. The machine's limit is
//! the larger of two times measured in the same run: writing the result's
//! size into fresh memory (advised for huge pages, as the coupling's result
//! is), and the essential flops at that rate. For context it also times a
//! floor of the memory traffic every coupling pays and the limit leaves
//! out: reading the components' values and writing them, block-diagonally,
//! into a fresh result of the same size. All times,
//! the ratios and the largest relative difference between the results (on
//! every 100th line) are printed.
//!
//! Run: `cargo run --release --example bench_couple` (Python: $MORTISE_PYTHON,
//! else .venv/bin/python).

use mortise::assemble::{
    bench_case, couple, couple_requested, couple_with_threads, default_threads, values_digest,
    CouplingOptions, Request, BENCH_SEED,
};
use mortise::limits::Limits;
use num_complex::Complex64;
use std::mem::MaybeUninit;
use std::path::PathBuf;
use std::process::Command;
use std::time::Instant;

const LINES: usize = 6400;
const N_A: usize = 60;
const N_B: usize = 48;
const N_IF: usize = 12;
const SEED: u64 = BENCH_SEED;
/// Repetitions (best taken) of the Rust run and of the one-thread numpy run;
/// the two-thread numpy run, slow when the machine is shared, gets 2.
const REPS: usize = 5;
const SAMPLE: usize = 100;

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

/// Wall time (best of 3) of filling a fresh result of [`LINES`] lines of
/// `per_line` values, in a buffer advised for huge pages as the coupling's
/// result is, the lines dealt out to `threads` threads in equal runs:
/// `line(k, values)` must write every value of line `k`.
fn fresh_pass(
    per_line: usize,
    threads: usize,
    line: impl Fn(usize, &mut [MaybeUninit<Complex64>]) + Sync,
) -> f64 {
    let values = LINES * per_line;
    let per_thread = LINES.div_ceil(threads.max(1));
    let mut best = f64::INFINITY;
    for _ in 0..3 {
        let t0 = Instant::now();
        let mut v: Vec<Complex64> = mortise::mem::large_vec(values);
        let spare = &mut v.spare_capacity_mut()[..values];
        std::thread::scope(|sc| {
            for (t, part) in spare.chunks_mut((per_thread * per_line).max(1)).enumerate() {
                let line = &line;
                sc.spawn(move || {
                    for (l, values) in part.chunks_mut(per_line.max(1)).enumerate() {
                        line(t * per_thread + l, values);
                    }
                });
            }
        });
        // SAFETY: `line` wrote every value of every line (its contract)
        unsafe { v.set_len(values) };
        best = best.min(t0.elapsed().as_secs_f64());
        std::hint::black_box(&v);
    }
    best
}

fn main() {
    let root = PathBuf::from(env!("CARGO_MANIFEST_DIR"));
    let dir = root.join("target/bench-couple");
    std::fs::create_dir_all(&dir).expect("cannot create target/bench-couple");

    // `--rust-only`: time the Rust core only (for profiling, and for
    // tools/wasm-bench.mjs, which reads the last line as JSON); `--lines N`:
    // another number of lines (the comparison with numpy needs the default)
    let args: Vec<String> = std::env::args().collect();
    let rust_only = args.iter().any(|a| a == "--rust-only");
    let lines = match args.iter().position(|a| a == "--lines") {
        Some(i) => args
            .get(i + 1)
            .and_then(|v| v.parse::<usize>().ok())
            .expect("--lines takes a number of lines"),
        None => LINES,
    };
    assert!(
        rust_only || lines == LINES,
        "--lines goes with --rust-only (numpy's comparison uses {LINES})"
    );
    let (comps, joints) =
        bench_case(lines, N_A, N_B, N_IF, SEED, &Limits::default()).expect("the benchmark case");
    let opts = CouplingOptions::default();

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
        let digest = values_digest(&r.set);
        drop(r);
        let mut serial = f64::INFINITY;
        for _ in 0..3 {
            let t0 = Instant::now();
            let r1 = couple_with_threads(&comps, &joints, &opts, 1).expect("coupling failed");
            serial = serial.min(t0.elapsed().as_secs_f64());
            drop(r1);
        }
        println!("mortise (Rust, {lines} lines, {threads} threads, best of {REPS}): {best:.3} s wall, {best_cpu:.3} s CPU; 1 thread, best of 3: {serial:.3} s");
        println!(
            "{}",
            serde_json::json!({"lines": lines, "threads": threads, "seconds": best, "serial_seconds": serial, "digest": digest})
        );
        return;
    }
    // best of 2: the first run's result is the second 1.19 GB held, and its
    // fresh memory alone took 2.25 s against 0.65 s for the next run
    let mut t_serial = f64::INFINITY;
    for _ in 0..2 {
        let t1 = Instant::now();
        let serial = couple_with_threads(&comps, &joints, &opts, 1).expect("coupling failed");
        t_serial = t_serial.min(t1.elapsed().as_secs_f64());
        assert_eq!(
            serial.set.data, r.set.data,
            "threaded and serial results differ"
        );
    }

    // requested outputs: 4 targets (last outputs of the assembly) × 4
    // sources (first inputs), demand-driven, equal to the full result's
    // entries bit for bit
    let req = Request::of(
        r.set.outputs[r.set.n_out() - 4..].to_vec(),
        r.set.inputs[..4].to_vec(),
    );
    let mut t_req = f64::INFINITY;
    let mut solved = (0, 0);
    for _ in 0..REPS {
        let t0 = Instant::now();
        let q = couple_requested(&comps, &joints, &opts, &req).expect("requested coupling failed");
        t_req = t_req.min(t0.elapsed().as_secs_f64());
        solved = q.solved;
        let want = req.pick(&r.set);
        assert_eq!(
            q.assembled.set.data, want.data,
            "requested and full results differ"
        );
    }

    // the floor of any request: one entry, so the work left is cutting the
    // components and the per-line interface solve (its singular values for
    // the reported condition number, then the LU solve), which every
    // request needs whatever it asks
    let one = Request::of(
        vec![r.set.outputs[r.set.n_out() - 1].clone()],
        vec![r.set.inputs[0].clone()],
    );
    let mut t_one = f64::INFINITY;
    let mut solved_one = (0, 0);
    for _ in 0..REPS {
        let t0 = Instant::now();
        let q = couple_requested(&comps, &joints, &opts, &one).expect("requested coupling failed");
        t_one = t_one.min(t0.elapsed().as_secs_f64());
        solved_one = q.solved;
        assert_eq!(q.assembled.set.data, one.pick(&r.set).data);
    }

    // numpy, both versions, with one and with two BLAS threads; the faster is the reference
    struct NpRun {
        setting: String,
        version: &'static str,
        secs: f64,
        cpu: f64,
    }
    let mut np_runs: Vec<NpRun> = Vec::new();
    let mut np_version = String::from("?");
    let mut zgemm_gflops: f64 = 0.0;
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
        zgemm_gflops = zgemm_gflops.max(v["zgemm_gflops"].as_f64().unwrap_or(0.0));
        for version in ["matmul", "indexed"] {
            np_runs.push(NpRun {
                setting: format!("{blas_threads} BLAS thread(s), best of {reps}"),
                version,
                secs: v[version]["seconds"].as_f64().expect("seconds"),
                cpu: v[version]["cpu_seconds"].as_f64().unwrap_or(f64::NAN),
            });
        }
    }
    let best_of = |version: &str| {
        np_runs
            .iter()
            .filter(|r| r.version == version)
            .fold((f64::INFINITY, f64::INFINITY), |(t, c), r| {
                (t.min(r.secs), c.min(r.cpu))
            })
    };
    let (t_mm, c_mm) = best_of("matmul");
    let (t_ix, c_ix) = best_of("indexed");

    // compare the sampled lines of both numpy versions
    let n = N_A + N_B;
    let per = n * n;
    let mut worst = [0.0f64; 2];
    let mut count = 0;
    for (w, version) in ["matmul", "indexed"].iter().enumerate() {
        let bytes =
            std::fs::read(dir.join(format!("numpy_{version}_samples.bin"))).expect("samples");
        count = 0;
        for (s, k) in (0..LINES).step_by(SAMPLE).enumerate() {
            let line = r.set.line(k);
            let mut scale: f64 = 0.0;
            let mut diff: f64 = 0.0;
            for (e, v) in line.iter().enumerate() {
                let o = (s * per + e) * 16;
                let re = f64::from_le_bytes(bytes[o..o + 8].try_into().expect("8 bytes"));
                let im = f64::from_le_bytes(bytes[o + 8..o + 16].try_into().expect("8 bytes"));
                let x = Complex64::new(re, im);
                scale = scale.max(x.norm());
                diff = diff.max((v - x).norm());
            }
            worst[w] = worst[w].max(diff / scale);
            count += 1;
        }
    }
    let cmax = r.condition.iter().cloned().fold(0.0, f64::max);
    drop(r);

    // the machine's limit: writing the result's size into fresh memory (all
    // threads, best of 3; a buffer advised for huge pages, as the coupling's
    // result is), and the essential flops at the measured zgemm rate
    let values = LINES * n * n;
    let t_write = fresh_pass(n * n, threads, |_, line| {
        for x in line {
            x.write(Complex64::new(1.0, 0.0));
        }
    });
    // a floor of the memory traffic no coupling avoids, for context beside
    // the limit: every line reads the components' values (the Y term of
    // Y − Y B_fᵀ X) and writes the result's. This pass copies the
    // block-diagonal Y into a fresh result of the same kind, its zero
    // blocks included
    assert!(
        comps.iter().all(|c| c.n_out() == c.n_in())
            && comps.iter().map(|c| c.n_in()).sum::<usize>() == n,
        "the copy pass expects square components whose sizes add up to the result's"
    );
    let zero = Complex64::new(0.0, 0.0);
    let t_copy = fresh_pass(n * n, threads, |k, line| {
        let mut off = 0;
        for c in &comps {
            let w = c.n_in();
            for (i, src) in c.line(k).chunks(w).enumerate() {
                let row = &mut line[(off + i) * n..(off + i + 1) * n];
                let (before, rest) = row.split_at_mut(off);
                let (block, after) = rest.split_at_mut(w);
                before.iter_mut().for_each(|d| {
                    d.write(zero);
                });
                for (d, &y) in block.iter_mut().zip(src) {
                    d.write(y);
                }
                after.iter_mut().for_each(|d| {
                    d.write(zero);
                });
            }
            off += w;
        }
    });
    let input_gb: f64 = comps.iter().map(|c| (c.data.len() * 16) as f64 / 1e9).sum();

    // per line: the update (n × m)(m × n), 8 n² m real flops; the solve of
    // the m × m interface with n right-hand sides, 8/3 m³ + 8 m² n
    let (nf, mf) = (n as f64, N_IF as f64);
    let flops = LINES as f64 * (8.0 * nf * nf * mf + 8.0 / 3.0 * mf.powi(3) + 8.0 * mf * mf * nf);
    let t_flops = flops / (zgemm_gflops * 1e9);
    let limit = t_write.max(t_flops);

    println!(
        "LM-FBS: {N_A} + {N_B} DOFs, {N_IF} rigid interface DOFs, {LINES} lines ({n} × {n} result per line)"
    );
    println!(
        "mortise (Rust, {threads} threads, best of {REPS}): {best:.3} s wall, {best_cpu:.2} s CPU"
    );
    println!("mortise (Rust, 1 thread, best of 2): {t_serial:.3} s wall");
    for r in &np_runs {
        let what = if r.version == "matmul" {
            "stacked matmul with Boolean B + batched solve"
        } else {
            "indexed interface + batched solve + in-place update"
        };
        println!(
            "numpy {np_version} {} ({what}; {}): {:.3} s wall, {:.2} s CPU",
            r.version, r.setting, r.secs, r.cpu
        );
    }
    println!(
        "machine limit: writing the {:.2} GB result into fresh memory ({threads} threads) {t_write:.3} s; {:.2} GFLOP essential at {zgemm_gflops:.1} GFLOP/s (numpy zgemm, 1024², best BLAS threads) {t_flops:.3} s; limit (the larger) {limit:.3} s",
        values as f64 * 16.0 / 1e9,
        flops / 1e9
    );
    println!(
        "memory floor (context, not the limit): reading the components' {input_gb:.2} GB and writing them block-diagonally into the fresh result ({threads} threads) {t_copy:.3} s; mortise / it {:.2}; the floor or the flops, the larger: {:.3} s, mortise / it {:.2}",
        best / t_copy,
        t_copy.max(t_flops),
        best / t_copy.max(t_flops)
    );
    println!(
        "ratio numpy matmul / mortise: {:.2} wall, {:.2} CPU",
        t_mm / best,
        c_mm / best_cpu
    );
    println!(
        "ratio numpy indexed (strongest) / mortise: {:.2} wall (target ≥ 5), {:.2} CPU",
        t_ix / best,
        c_ix / best_cpu
    );
    println!(
        "ratio mortise / machine limit: {:.2} (target ≤ 2)",
        best / limit
    );
    println!(
        "mortise requested outputs (4 targets × 4 sources; {} × {} solved of {n} × {n}; best of {REPS}): {t_req:.4} s wall; equal to the full result's entries bit for bit",
        solved.0, solved.1
    );
    println!(
        "ratio numpy indexed full / mortise requested: {:.0} (target ≥ 100)",
        t_ix / t_req
    );
    println!(
        "mortise requested 1 × 1 ({} × {} solved; the interface solve every request needs; best of {REPS}): {t_one:.4} s wall; ratio numpy indexed full / it: {:.0} (what no request can beat)",
        solved_one.0,
        solved_one.1,
        t_ix / t_one
    );
    println!(
        "max relative difference on {count} sampled lines: numpy matmul {:.2e}, numpy indexed {:.2e}",
        worst[0], worst[1]
    );
    println!("largest interface condition number: {cmax:.3e}");
}
