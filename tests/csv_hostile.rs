//! Hostile input to the CSV readers (our own `mortise-frf 1` layout and
//! supplier files through a column map): small files whose header or map
//! claims a huge matrix must be refused before anything of that size is
//! built, and the work must stay linear in the file's size.
//!
//! These are robustness tests; the sizes are counted with an allocation
//! counter (`parse_support::Counting`), not timed, where a count says it,
//! so they do not depend on the machine's speed.

mod parse_support;

use mortise::error::{ErrorKind, Location};
use mortise::io::csv::{self, ColumnMap};
use mortise::limits::Limits;
use parse_support::{allocated_by, fastest, Counting};

#[global_allocator]
static ALLOC: Counting = Counting;

/// A block of our layout with `n` output and `n` input DOF lines, a
/// column-header row holding only `freq_Hz`, and `rows` data rows of one
/// cell: the header claims n² entries that no column backs.
fn square_header(n: usize, rows: usize) -> String {
    let mut t = String::from(
        "# mortise-frf 1\n# name: claim\n# out-quantity: acceleration\n# in-quantity: force\n# units: SI\n",
    );
    for k in 0..n {
        t.push_str(&format!("# output: w:{k}+Z\n"));
    }
    for k in 0..n {
        t.push_str(&format!("# input: w:{k}+Z\n"));
    }
    t.push_str("freq_Hz\n");
    for r in 0..rows {
        t.push_str(&format!("{}\n", r + 1));
    }
    t
}

#[test]
fn a_header_claiming_millions_of_entries_is_refused_in_linear_memory() {
    // 4,600 output and 4,600 input lines and no data (about 98 kB, the size
    // reported in issue 10) claim 21 million entries; the old reader built
    // every column label (2.7 GB) before comparing the counts.
    let big = square_header(4_600, 0);
    assert!(big.len() < 200_000, "{}", big.len());
    let small = square_header(460, 0);
    let (b_big, r_big) = allocated_by(|| csv::read_native(big.as_bytes(), "claim.csv"));
    let (b_small, r_small) = allocated_by(|| csv::read_native(small.as_bytes(), "claim.csv"));
    for r in [&r_big, &r_small] {
        let e = r.as_ref().unwrap_err();
        assert_eq!(e.kind, ErrorKind::Parse, "{e}");
        assert_eq!(e.file.as_deref(), Some("claim.csv"));
        assert!(matches!(e.location, Some(Location::Line(_))), "{e}");
        assert!(
            e.message.contains("1 columns; the header lines call for"),
            "{e}"
        );
    }
    // ten times the lines: linear work allocates about ten times as much,
    // the old square work a hundred times
    let ratio = b_big as f64 / b_small as f64;
    eprintln!("our CSV square header: 4,600 DOF lines allocate {b_big} bytes, 460 allocate {b_small} (ratio {ratio:.1})");
    assert!(
        ratio < 25.0,
        "allocated {b_big} bytes for 4,600 DOF lines against {b_small} for 460 (ratio {ratio:.1}); expected linear growth"
    );
    assert!(
        b_big < 64 << 20,
        "allocated {b_big} bytes for a 98 kB header"
    );
}

#[test]
fn a_header_over_the_memory_budget_is_refused_before_the_set_is_built() {
    // 4,600 × 4,600 entries on 100 lines are 33.9 GB of complex values
    // (16 bytes each), over the default 2 GiB budget: refused at the block's
    // magic line, naming the sizes, before any of it is allocated.
    let t = square_header(4_600, 100);
    let (bytes, r) = allocated_by(|| csv::read_native(t.as_bytes(), "claim.csv"));
    let e = r.unwrap_err();
    assert_eq!(e.kind, ErrorKind::Budget, "{e}");
    assert_eq!(e.location, Some(Location::Line(1)), "{e}");
    assert_eq!(e.file.as_deref(), Some("claim.csv"));
    assert!(
        e.message.contains("100 lines × 4600 outputs × 4600 inputs"),
        "{e}"
    );
    assert!(bytes < 64 << 20, "allocated {bytes} bytes");

    // a passed budget is the one used: 2 lines × 2 × 1 entries need 64 bytes
    let ok = "# mortise-frf 1\n# out-quantity: acceleration\n# in-quantity: force\n# units: SI\n\
# output: w:1+Z\n# output: w:2+Z\n# input: w:1+Z\n\
freq_Hz,re w:1+Z/w:1+Z,im w:1+Z/w:1+Z,re w:2+Z/w:1+Z,im w:2+Z/w:1+Z\n1,1,0,2,0\n2,1,0,2,0\n";
    let roomy = Limits {
        memory_bytes: 64,
        ..Limits::default()
    };
    let tight = Limits {
        memory_bytes: 63,
        ..Limits::default()
    };
    assert!(csv::read_native_with_limits(ok.as_bytes(), "ok.csv", &roomy).is_ok());
    let e = csv::read_native_with_limits(ok.as_bytes(), "ok.csv", &tight).unwrap_err();
    assert_eq!(e.kind, ErrorKind::Budget, "{e}");
}

/// A column map with `n` entries on distinct outputs and inputs (out k, in
/// k), each naming its own re/im columns, and a file with `rows` rows.
fn diagonal(n: usize, rows: usize, one_input: bool) -> (ColumnMap, String) {
    let entries: Vec<serde_json::Value> = (0..n)
        .map(|k| {
            serde_json::json!({
                "out_dof": format!("w:{k}+Z"),
                "in_dof": if one_input { "w:0+Z".to_string() } else { format!("w:{k}+Z") },
                "values": {"form": "re-im", "re": format!("r{k}"), "im": format!("i{k}")}
            })
        })
        .collect();
    let map = csv::map_from_json(serde_json::json!({
        "delimiter": "comma",
        "skip_rows": 1,
        "freq": "f",
        "unit": "m/s^2/N",
        "out_qty": "acceleration",
        "in_qty": "force",
        "entries": entries
    }))
    .map(|(m, _)| m)
    .unwrap_or_else(|e| panic!("{e}"));
    let mut head = vec!["f".to_string()];
    for k in 0..n {
        head.push(format!("r{k}"));
        head.push(format!("i{k}"));
    }
    let mut t = head.join(",");
    t.push('\n');
    for r in 0..rows {
        t.push_str(&(r + 1).to_string());
        for _ in 0..n {
            t.push_str(",1,0");
        }
        t.push('\n');
    }
    (map, t)
}

#[test]
fn a_column_map_whose_matrix_grows_with_the_square_of_its_entries_is_refused() {
    // 3,000 entries on distinct DOF pairs make a 3,000 × 3,000 matrix:
    // on 30 rows 3000² × 30 × 16 bytes = 4.3 GB, over the 2 GiB default,
    // for a file of under a megabyte.
    let (map, text) = diagonal(3_000, 30, false);
    assert!(text.len() < 1_000_000);
    let (bytes, r) = allocated_by(|| csv::read_mapped(text.as_bytes(), "diag.csv", &map, "w"));
    let e = r.unwrap_err();
    assert_eq!(e.kind, ErrorKind::Budget, "{e}");
    assert_eq!(e.file.as_deref(), Some("diag.csv"));
    assert_eq!(e.field.as_deref(), Some("entries"));
    assert!(
        e.message.contains("30 lines × 3000 outputs × 3000 inputs"),
        "{e}"
    );
    assert!(bytes < 256 << 20, "allocated {bytes} bytes");
}

#[test]
fn resolving_a_large_column_map_is_linear() {
    // n entries on n outputs and one input, each naming its columns by
    // header name: the old plan scanned the header and the taken slots for
    // every entry (square in n). Timed as a ratio of 8,000 to 800 entries
    // (fastest of three runs each): linear work gives about 10.
    let (m_small, t_small) = diagonal(800, 2, true);
    let (m_big, t_big) = diagonal(8_000, 2, true);
    let run = |m: &ColumnMap, t: &str| {
        let s =
            csv::read_mapped(t.as_bytes(), "many.csv", m, "w").unwrap_or_else(|e| panic!("{e}"));
        assert_eq!(s.n_out(), m.entries.len());
    };
    let small = fastest(3, || run(&m_small, &t_small));
    let big = fastest(3, || run(&m_big, &t_big));
    let ratio = big / small;
    eprintln!("column map: 8,000 entries in {big:.3} s, 800 in {small:.3} s (ratio {ratio:.1})");
    assert!(
        ratio < 35.0,
        "8,000 entries took {big:.3} s, 800 took {small:.3} s (ratio {ratio:.1}); expected about 10"
    );
}
