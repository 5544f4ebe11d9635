//! Helpers for the hostile-input parser tests: an allocation counter (so a
//! test can say "this input made the parser allocate N bytes" without
//! depending on the machine's speed), a small UFF dataset 58 writer for
//! crafted files, and the seed files.
#![allow(dead_code)]

use std::alloc::{GlobalAlloc, Layout, System};
use std::cell::Cell;

thread_local! {
    static ALLOCATED: Cell<u64> = const { Cell::new(0) };
}

/// The system allocator, counting the bytes each thread asks for (sum of
/// allocation sizes, growth of reallocations included). Each test binary
/// that measures declares it as its `#[global_allocator]`.
pub struct Counting;

unsafe impl GlobalAlloc for Counting {
    unsafe fn alloc(&self, l: Layout) -> *mut u8 {
        let _ = ALLOCATED.try_with(|c| c.set(c.get().saturating_add(l.size() as u64)));
        System.alloc(l)
    }
    unsafe fn dealloc(&self, p: *mut u8, l: Layout) {
        System.dealloc(p, l)
    }
    unsafe fn alloc_zeroed(&self, l: Layout) -> *mut u8 {
        let _ = ALLOCATED.try_with(|c| c.set(c.get().saturating_add(l.size() as u64)));
        System.alloc_zeroed(l)
    }
    unsafe fn realloc(&self, p: *mut u8, l: Layout, new: usize) -> *mut u8 {
        let grow = new.saturating_sub(l.size()) as u64;
        let _ = ALLOCATED.try_with(|c| c.set(c.get().saturating_add(grow)));
        System.realloc(p, l, new)
    }
}

/// Bytes this thread allocated while running `f` (only meaningful in a
/// binary whose global allocator is [`Counting`]), and `f`'s result.
pub fn allocated_by<T>(f: impl FnOnce() -> T) -> (u64, T) {
    let before = ALLOCATED.with(Cell::get);
    let r = f();
    (ALLOCATED.with(Cell::get) - before, r)
}

/// The fastest of `runs` timings of `f`, in seconds (the minimum is the
/// least disturbed by other work on a shared machine).
pub fn fastest(runs: usize, mut f: impl FnMut()) -> f64 {
    (0..runs)
        .map(|_| {
            let t = std::time::Instant::now();
            f();
            t.elapsed().as_secs_f64()
        })
        .fold(f64::INFINITY, f64::min)
}

fn axis(code: i32, units: &str) -> String {
    format!(
        "{code:>10}{:>5}{:>5}{:>5} {:<20} {:<20}",
        0, 0, 0, "NONE", units
    )
}

/// One ASCII dataset 58 in the record layout of the public description (as
/// reproduced in pyuff 2.5.8 `datasets/dataset_58.py`): an accelerance FRF
/// (function type 4, m/s² per N), ID line 1 `id1`, response `out_node`+Z,
/// reference `in_node`+Z, complex double on an even grid of `points` lines
/// from `f0` Hz by 1 Hz, every value 1 + 0.5i.
pub fn dataset(id1: &str, out_node: i64, in_node: i64, f0: f64, points: usize) -> String {
    let mut l = vec![
        "    -1".to_string(),
        "    58".to_string(),
        id1.to_string(),
        "NONE".into(),
        "NONE".into(),
        "NONE".into(),
        "NONE".into(),
        format!(
            "{:>5}{:>10}{:>5}{:>10} {:>10}{:>10}{:>4} {:>10}{:>10}{:>4}",
            4, 0, 0, 0, "NONE", out_node, 3, "NONE", in_node, 3
        ),
        format!(
            "{:>10}{:>10}{:>10}{:>13.5e}{:>13.5e}{:>13.5e}",
            6, points, 1, f0, 1.0, 0.0
        ),
        axis(18, "Hz"),
        axis(12, "m/s^2"),
        axis(13, "N"),
        axis(0, "NONE"),
    ];
    for _ in 0..points {
        l.push(format!("{:>20.11e}{:>20.11e}", 1.0, 0.5));
    }
    l.push("    -1".into());
    let mut s = l.join("\n");
    s.push('\n');
    s
}

/// A seed file of sample-frf/.
pub fn sample(name: &str) -> Vec<u8> {
    let p = std::path::Path::new(env!("CARGO_MANIFEST_DIR"))
        .join("sample-frf")
        .join(name);
    std::fs::read(&p).unwrap_or_else(|e| panic!("{}: {e}", p.display()))
}

/// The column map of sample-frf/wall-to-bed-pressure.csv as the demo recipe
/// gives it (four pressure-per-force FRFs, re/im columns).
pub fn pressure_map() -> mortise::io::csv::ColumnMap {
    let entries: Vec<serde_json::Value> = (1..=4)
        .map(|k| {
            serde_json::json!({
                "out_dof": "room:bed",
                "in_dof": format!("wall:a{k}+X"),
                "values": {"form": "re-im", "re": format!("p_bed_a{k}_re"), "im": format!("p_bed_a{k}_im")}
            })
        })
        .collect();
    let v = serde_json::json!({
        "delimiter": "comma",
        "skip_rows": 2,
        "freq": "freq_Hz",
        "unit": "Pa/N",
        "out_qty": "pressure",
        "in_qty": "force",
        "entries": entries
    });
    mortise::io::csv::map_from_json(v)
        .map(|(m, _)| m)
        .unwrap_or_else(|e| panic!("pressure map: {e}"))
}
