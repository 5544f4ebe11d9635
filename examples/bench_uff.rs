//! Speed and memory benchmark of reading large UFF files: mortise's reader
//! against pyuff, measured in the same run.
//!
//! The file: receptances of an invented heat-pump compressor bracket model
//! (modal superposition, 12 modes, 2 % damping; no measurement), 500
//! response DOFs × 2 reference DOFs (driving points among them), 5,000
//! even lines, complex double: 1,000 datasets 58 of 2,500 data lines each,
//! written by mortise's own writer (`uff58::write`, the layout's 20-column
//! fields) as ASCII (~200 MB) and as 58b (binary, ~80 MB) into
//! target/bench-uff/ at bench time (kept between runs, never committed).
//!
//! For each file: mortise's read as the CLI and the page read a file
//! (`io::load`: the file's bytes read from disk, detected, parsed, grouped
//! into one FRF set) is timed (best of REPS), and its peak heap memory during the read is counted by a global
//! allocator that keeps the running and the largest total of live bytes;
//! the peak is given relative to the file's size (the file's bytes count:
//! they are held during the parse). Then tests/py/bench_uff_pyuff.py times
//! `pyuff.UFF(path).read_sets()` on the same file in a fresh Python process
//! and returns one dataset, which is compared with mortise's value at the
//! same DOF pair (reference: pyuff 2.5.8, PyPI).
//!
//! Run: `cargo run --release --example bench_uff` (Python: $MORTISE_PYTHON,
//! else .venv/bin/python). `--rust-only`: skip pyuff (for profiling).

use mortise::frf::{Direction, Dof, FrfSet};
use mortise::io::{uff58, ImportOptions};
use mortise::units::Quantity;
use num_complex::Complex64;
use std::alloc::{GlobalAlloc, Layout, System};
use std::path::{Path, PathBuf};
use std::process::Command;
use std::sync::atomic::{AtomicUsize, Ordering};
use std::time::Instant;

const N_OUT: usize = 500;
const REFS: [usize; 2] = [37, 412];
const LINES: usize = 5000;
const DF: f64 = 0.5;
const MODES: usize = 12;
/// Reads per file; the best is kept (the build machine is a virtual machine whose
/// speed varies between runs of the same binary).
const REPS: usize = 5;
/// The dataset (0-based, in file order) compared with pyuff's.
const RECORD: usize = 737;

/// Counts live heap bytes and their peak (common practice: a counting
/// wrapper around the system allocator).
struct Counting;
static LIVE: AtomicUsize = AtomicUsize::new(0);
static PEAK: AtomicUsize = AtomicUsize::new(0);

// SAFETY: every call is forwarded unchanged to the system allocator; the
// wrapper only adds and subtracts the sizes in two atomic counters.
unsafe impl GlobalAlloc for Counting {
    unsafe fn alloc(&self, l: Layout) -> *mut u8 {
        let p = System.alloc(l);
        if !p.is_null() {
            let now = LIVE.fetch_add(l.size(), Ordering::Relaxed) + l.size();
            PEAK.fetch_max(now, Ordering::Relaxed);
        }
        p
    }
    unsafe fn alloc_zeroed(&self, l: Layout) -> *mut u8 {
        let p = System.alloc_zeroed(l);
        if !p.is_null() {
            let now = LIVE.fetch_add(l.size(), Ordering::Relaxed) + l.size();
            PEAK.fetch_max(now, Ordering::Relaxed);
        }
        p
    }
    unsafe fn dealloc(&self, p: *mut u8, l: Layout) {
        System.dealloc(p, l);
        LIVE.fetch_sub(l.size(), Ordering::Relaxed);
    }
    unsafe fn realloc(&self, p: *mut u8, l: Layout, new: usize) -> *mut u8 {
        let q = System.realloc(p, l, new);
        if !q.is_null() {
            if new >= l.size() {
                let now = LIVE.fetch_add(new - l.size(), Ordering::Relaxed) + (new - l.size());
                PEAK.fetch_max(now, Ordering::Relaxed);
            } else {
                LIVE.fetch_sub(l.size() - new, Ordering::Relaxed);
            }
        }
        q
    }
}

#[global_allocator]
static GLOBAL: Counting = Counting;

fn python() -> PathBuf {
    match std::env::var("MORTISE_PYTHON") {
        Ok(p) => PathBuf::from(p),
        Err(_) => PathBuf::from(env!("CARGO_MANIFEST_DIR")).join(".venv/bin/python"),
    }
}

/// Receptance (m/N) of a modal model: Σ_r φ_o,r φ_i,r / (ω_r² − ω² + 2iζω_rω),
/// e^{+iωt} (textbook modal superposition, e.g. Ewins, Modal Testing, ch. 2).
fn model() -> FrfSet {
    let freqs: Vec<f64> = (1..=LINES).map(|k| k as f64 * DF).collect();
    let outputs: Vec<Dof> = (0..N_OUT)
        .map(|o| Dof::new("bracket", &(o + 1).to_string(), Direction::Z))
        .collect();
    let inputs: Vec<Dof> = REFS.iter().map(|&o| outputs[o].clone()).collect();
    let mut s = FrfSet::zeros(
        "bracket receptance",
        freqs,
        outputs,
        inputs,
        Quantity::Displacement,
        Quantity::Force,
    );
    let shape = |o: usize, r: usize| {
        ((o + 1) as f64 * (r + 1) as f64 * std::f64::consts::PI / (N_OUT + 1) as f64).sin()
    };
    let wr: Vec<f64> = (0..MODES)
        .map(|r| 2.0 * std::f64::consts::PI * 35.0 * ((r + 1) as f64).powf(1.6))
        .collect();
    let zeta = 0.02;
    let n_in = REFS.len();
    for k in 0..LINES {
        let w = 2.0 * std::f64::consts::PI * s.freqs[k];
        let den: Vec<Complex64> = wr
            .iter()
            .map(|&r| 1.0 / Complex64::new(r * r - w * w, 2.0 * zeta * r * w))
            .collect();
        for o in 0..N_OUT {
            for (j, &i) in REFS.iter().enumerate() {
                let mut h = Complex64::new(0.0, 0.0);
                for (r, d) in den.iter().enumerate() {
                    h += d * (shape(o, r) * shape(i, r));
                }
                s.data[(k * N_OUT + o) * n_in + j] = h;
            }
        }
    }
    s
}

struct Run {
    secs: f64,
    cpu: f64,
    peak: usize,
    set: FrfSet,
}

/// CPU time (user + system) of this process in seconds, from /proc/self/stat
/// (Linux, clock ticks of 1/100 s); NaN elsewhere.
fn cpu_seconds() -> f64 {
    let Ok(s) = std::fs::read_to_string("/proc/self/stat") else {
        return f64::NAN;
    };
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

fn mortise_read(path: &Path) -> Run {
    let name = path
        .file_name()
        .and_then(|n| n.to_str())
        .unwrap_or("bench.uff")
        .to_string();
    let mut best = f64::INFINITY;
    let mut best_cpu = f64::INFINITY;
    let mut peak = 0;
    let mut kept = None;
    for _ in 0..REPS {
        drop(kept.take());
        let base = LIVE.load(Ordering::Relaxed);
        PEAK.store(base, Ordering::Relaxed);
        let t0 = Instant::now();
        let c0 = cpu_seconds();
        // as the CLI reads a file (one allocation of the file's size, backed
        // by huge pages on Linux, a large one read by two threads)
        let limits = mortise::limits::Limits {
            file_bytes: u64::MAX / 2,
            ..Default::default()
        };
        let bytes = mortise::io::disk::read_file(path, &name, &limits)
            .unwrap_or_else(|e| panic!("cannot read the benchmark file: {e}"));
        let loaded = mortise::io::load(&bytes, &name, &ImportOptions::default())
            .unwrap_or_else(|e| panic!("mortise: {e}"));
        drop(bytes);
        let mut sets = loaded.sets;
        best = best.min(t0.elapsed().as_secs_f64());
        best_cpu = best_cpu.min(cpu_seconds() - c0);
        peak = peak.max(PEAK.load(Ordering::Relaxed) - base);
        assert_eq!(sets.len(), 1, "expected one set");
        kept = sets.pop();
    }
    Run {
        secs: best,
        cpu: best_cpu,
        peak,
        set: kept.expect("no run"),
    }
}

fn main() {
    let root = PathBuf::from(env!("CARGO_MANIFEST_DIR"));
    let dir = root.join("target/bench-uff");
    std::fs::create_dir_all(&dir).expect("cannot create target/bench-uff");
    let rust_only = std::env::args().any(|a| a == "--rust-only");
    let files = [
        (dir.join("bracket_v1.uff"), false),
        (dir.join("bracket_v1_58b.uff"), true),
    ];
    if files.iter().any(|(p, _)| !p.exists()) {
        let t0 = Instant::now();
        let s = model();
        let t_model = t0.elapsed().as_secs_f64();
        for (p, binary) in &files {
            let t0 = Instant::now();
            let bytes = uff58::write(std::slice::from_ref(&s), *binary).expect("write");
            let tmp = p.with_extension("part");
            std::fs::write(&tmp, &bytes).expect("cannot write the benchmark file");
            std::fs::rename(&tmp, p).expect("cannot name the benchmark file");
            println!(
                "generated {} ({:.1} MB) with mortise's writer in {:.2} s (model {t_model:.2} s)",
                p.display(),
                bytes.len() as f64 / 1e6,
                t0.elapsed().as_secs_f64()
            );
        }
    }
    println!(
        "UFF 58: {N_OUT} responses × {} references, {LINES} lines, complex double ({} datasets)",
        REFS.len(),
        N_OUT * REFS.len()
    );
    let mut failed = false;
    // --only-58b / --only-ascii: one file (for a profiler)
    let only = |b: bool| {
        !(std::env::args().any(|a| a == "--only-58b") && !b
            || std::env::args().any(|a| a == "--only-ascii") && b)
    };
    for (path, binary) in files.iter().filter(|(_, b)| only(*b)) {
        let size = std::fs::metadata(path).expect("benchmark file").len() as f64;
        let kind = if *binary {
            "58b (binary)"
        } else {
            "58 (ASCII)"
        };
        let r = mortise_read(path);
        let mb = size / 1e6;
        println!(
            "{kind}, {mb:.1} MB: mortise best of {REPS} {:.3} s wall, {:.2} s CPU ({:.0} MB/s); peak heap during the read {:.1} MB = {:.2} × the file (target ≤ 3)",
            r.secs,
            r.cpu,
            mb / r.secs,
            r.peak as f64 / 1e6,
            r.peak as f64 / size
        );
        if r.peak as f64 > 3.0 * size {
            failed = true;
        }
        if rust_only {
            continue;
        }
        let out = Command::new(python())
            .arg(root.join("tests/py/bench_uff_pyuff.py"))
            .arg(path)
            .arg(RECORD.to_string())
            .output()
            .expect("cannot start Python (set MORTISE_PYTHON)");
        if !out.status.success() {
            eprintln!("{}", String::from_utf8_lossy(&out.stderr));
            std::process::exit(1);
        }
        let v: serde_json::Value =
            serde_json::from_slice(&out.stdout).expect("bench_uff_pyuff.py printed no JSON");
        let t_py = v["seconds"].as_f64().expect("seconds");
        let rss = v["peak_rss_after"].as_f64().unwrap_or(f64::NAN)
            - v["peak_rss_before"].as_f64().unwrap_or(f64::NAN);
        println!(
            "{kind}: pyuff {} read_sets {t_py:.3} s wall, {:.2} s CPU; peak resident memory (VmHWM) grew by {:.1} MB = {:.2} × the file",
            v["pyuff"].as_str().unwrap_or("?"),
            v["cpu_seconds"].as_f64().unwrap_or(f64::NAN),
            rss / 1e6,
            rss / size
        );
        let ratio = t_py / r.secs;
        println!("{kind}: ratio pyuff / mortise {ratio:.1} (target ≥ 10)");
        if ratio < 10.0 {
            failed = true;
        }
        // the compared dataset: same DOF pair, same abscissa, same values
        // reference: pyuff 2.5.8 (PyPI)
        assert_eq!(
            v["datasets"].as_u64(),
            Some((N_OUT * REFS.len()) as u64),
            "pyuff's dataset count"
        );
        let rec = &v["record"];
        let node = |k: &str| rec[k].as_i64().expect("node").to_string();
        let o = r
            .set
            .outputs
            .iter()
            .position(|d| d.node == node("rsp_node"))
            .expect("pyuff's response node among mortise's outputs");
        let i = r
            .set
            .inputs
            .iter()
            .position(|d| d.node == node("ref_node"))
            .expect("pyuff's reference node among mortise's inputs");
        let arr = |k: &str| -> Vec<f64> {
            rec[k]
                .as_array()
                .expect("array")
                .iter()
                .map(|x| x.as_f64().expect("number"))
                .collect()
        };
        let (x, re, im) = (arr("x"), arr("re"), arr("im"));
        assert_eq!(x.len(), LINES, "pyuff's point count");
        let mut worst: f64 = 0.0;
        let mut scale: f64 = 0.0;
        for k in 0..LINES {
            assert!(
                (x[k] - r.set.freqs[k]).abs() <= 1e-9 * r.set.freqs[k],
                "abscissa {k}"
            );
            let p = Complex64::new(re[k], im[k]);
            worst = worst.max((r.set.get(k, o, i) - p).norm());
            scale = scale.max(p.norm());
        }
        let rel = worst / scale;
        println!(
            "{kind}: dataset {} (response {}, reference {}) against pyuff's: max difference {rel:.2e} of the largest value",
            RECORD + 1,
            r.set.outputs[o],
            r.set.inputs[i]
        );
        assert!(
            if *binary { rel == 0.0 } else { rel < 1e-12 },
            "mortise and pyuff disagree on dataset {}",
            RECORD + 1
        );
    }
    if failed {
        println!("bench_uff: a target is not met (see above)");
    }
}
