//! Hostile input to the UFF dataset 58 reader: many datasets that share a
//! set name, and datasets whose DOF pairs make a matrix that grows with the
//! square of their number. Robustness tests: the work must stay linear in
//! the number of datasets (asserted as a ratio of timings, not an absolute
//! time) and a matrix over the memory budget is refused before it is built.

mod parse_support;

use mortise::error::{ErrorKind, Location};
use mortise::io::{self, uff58, ImportOptions};
use mortise::limits::Limits;
use parse_support::{dataset, fastest, Counting};

#[global_allocator]
static ALLOC: Counting = Counting;

/// `n` datasets with ID line 1 `NONE` (so every set takes the file stem as
/// its name), each on its own grid (start frequency 1 + k Hz), so each is a
/// set of its own and every name after the first must be made unique.
fn same_name(n: usize) -> Vec<u8> {
    let mut t = String::new();
    for k in 0..n {
        t.push_str(&dataset("NONE", 1, 1, 1.0 + k as f64, 2));
    }
    t.into_bytes()
}

#[test]
fn datasets_sharing_one_set_name_are_grouped_and_renamed_in_linear_time() {
    // Issue 10: 4,000 such datasets took 21 s; the renaming loop restarted
    // from 2 for every set and scanned every earlier set (cubic). Here
    // 10,000 against 1,000 (fastest of three runs each); linear work gives
    // a ratio of about 10, the old cubic one about 1,000.
    let small = same_name(1_000);
    let big = same_name(10_000);
    let read = |b: &[u8]| uff58::read(b, "casing.uff", "casing").unwrap_or_else(|e| panic!("{e}"));
    let t_small = fastest(3, || {
        read(&small);
    });
    let t_big = fastest(3, || {
        read(&big);
    });
    let ratio = t_big / t_small;
    eprintln!(
        "UFF same-name datasets: 1,000 in {t_small:.3} s, 10,000 in {t_big:.3} s, ratio {ratio:.1}"
    );
    assert!(
        ratio < 30.0,
        "10,000 datasets took {t_big:.3} s, 1,000 took {t_small:.3} s (ratio {ratio:.1}); expected about 10"
    );

    // names are unique and the same on every read, in the documented order:
    // the name, then with the kind, then numbered from 2
    let (sets, _) = read(&big);
    assert_eq!(sets.len(), 10_000);
    let names: std::collections::HashSet<&str> = sets.iter().map(|s| s.name.as_str()).collect();
    assert_eq!(names.len(), 10_000, "set names repeat");
    assert_eq!(sets[0].name, "casing");
    assert_eq!(sets[1].name, "casing (accelerance)");
    assert_eq!(sets[2].name, "casing (accelerance) 2");
    assert_eq!(sets[9_999].name, "casing (accelerance) 9999");
    let (again, _) = read(&big);
    assert!(sets.iter().zip(&again).all(|(a, b)| a.name == b.name));
    // and each set holds its own dataset's grid (start 1 + k Hz)
    assert_eq!(sets[7].freqs, vec![8.0, 9.0]);
}

#[test]
fn a_name_already_taken_by_a_numbered_name_is_skipped() {
    // a file whose own ID lines already use "x (accelerance) 2": the
    // numbering skips the taken name and stays unique
    let mut t = String::new();
    t.push_str(&dataset("x (accelerance) 2", 1, 1, 1.0, 2));
    for k in 0..3 {
        t.push_str(&dataset("x", 1, 1, 10.0 + k as f64, 2));
    }
    let (sets, _) = uff58::read(t.as_bytes(), "x.uff", "x").unwrap_or_else(|e| panic!("{e}"));
    let names: Vec<&str> = sets.iter().map(|s| s.name.as_str()).collect();
    assert_eq!(
        names,
        [
            "x (accelerance) 2",
            "x",
            "x (accelerance)",
            "x (accelerance) 3"
        ]
    );
}

/// `n` datasets on one grid, dataset k from node k to node k: one set
/// whose n × n matrix grows with the square of the dataset count.
fn diagonal(n: usize, points: usize) -> Vec<u8> {
    let mut t = String::new();
    for k in 0..n {
        t.push_str(&dataset("NONE", k as i64 + 1, k as i64 + 1, 1.0, points));
    }
    t.into_bytes()
}

#[test]
fn datasets_whose_matrix_exceeds_the_budget_are_refused_before_it_is_built() {
    // 4,000 diagonal datasets of 10 lines (about 3.5 MB of text) ask for a
    // 4,000 × 4,000 matrix on 10 lines: 4000² × 10 × 16 bytes = 2.56 GB,
    // over the default 2 GiB budget.
    let b = diagonal(4_000, 10);
    let e = io::load(&b, "diag.uff", &ImportOptions::default()).unwrap_err();
    assert_eq!(e.kind, ErrorKind::Budget, "{e}");
    assert_eq!(e.file.as_deref(), Some("diag.uff"));
    assert_eq!(e.location, Some(Location::Line(1)), "{e}");
    assert!(
        e.message.contains("10 lines × 4000 outputs × 4000 inputs"),
        "{e}"
    );

    // a passed budget is the one used: 3 diagonal datasets of 2 lines need
    // 3 × 3 × 2 × 16 = 288 bytes
    let small = diagonal(3, 2);
    let at = |m: u64| Limits {
        memory_bytes: m,
        ..Limits::default()
    };
    assert!(uff58::read_declared_with_limits(&small, "d.uff", None, None, &at(288)).is_ok());
    let e = uff58::read_declared_with_limits(&small, "d.uff", None, None, &at(287)).unwrap_err();
    assert_eq!(e.kind, ErrorKind::Budget, "{e}");
}

#[test]
fn many_distinct_dofs_in_one_set_are_placed_in_linear_time() {
    // n datasets from n responses to one reference: one n × 1 set. Placing
    // each dataset's DOFs used to scan every DOF before it (square in n),
    // and the duplicate-DOF check of the set did too.
    let one_ref = |n: usize| {
        let mut t = String::new();
        for k in 0..n {
            t.push_str(&dataset("NONE", k as i64 + 1, 1, 1.0, 2));
        }
        t.into_bytes()
    };
    let small = one_ref(1_000);
    let big = one_ref(10_000);
    let read = |b: &[u8]| {
        let (s, _) = uff58::read(b, "m.uff", "m").unwrap_or_else(|e| panic!("{e}"));
        assert_eq!(s.len(), 1);
    };
    let t_small = fastest(3, || read(&small));
    let t_big = fastest(3, || read(&big));
    let ratio = t_big / t_small;
    eprintln!("UFF one set of many DOFs: 1,000 in {t_small:.3} s, 10,000 in {t_big:.3} s, ratio {ratio:.1}");
    assert!(ratio < 30.0, "ratio {ratio:.1}; expected about 10");
}

/// `n` one-entry sets of one component, set k from node k (or node 1 when
/// `one_ref`) to node k, each with its own provenance record, on 4 lines.
fn deliveries(n: usize, one_ref: bool) -> Vec<mortise::frf::FrfSet> {
    use mortise::frf::{Direction, Dof, FrfSet, Provenance};
    use mortise::units::Quantity;
    (0..n)
        .map(|k| {
            let inp = if one_ref { 1 } else { k };
            let mut s = FrfSet::zeros(
                "hammer",
                vec![1.0, 2.0, 3.0, 4.0],
                vec![Dof::new("w", &k.to_string(), Direction::Z)],
                vec![Dof::new("w", &inp.to_string(), Direction::Z)],
                Quantity::Acceleration,
                Quantity::Force,
            );
            s.provenance.push(Provenance {
                file: format!("run{k}.uff"),
                ..Provenance::default()
            });
            s
        })
        .collect()
}

#[test]
fn merging_many_deliveries_is_linear() {
    // a roving-hammer delivery of n files merged into one n × 1 matrix: the
    // union of DOFs, their places and the provenance list used to scan
    // everything gathered so far (square in n). 10,000 against 1,000
    // (fastest of three runs each): linear work gives about 10.
    let small = deliveries(1_000, true);
    let big = deliveries(10_000, true);
    let run = |sets: &Vec<mortise::frf::FrfSet>| {
        let (m, _) = io::merge::merge(sets.clone()).unwrap_or_else(|e| panic!("{e}"));
        assert_eq!((m.n_out(), m.n_in()), (sets.len(), 1));
        assert_eq!(m.provenance.len(), sets.len());
    };
    let t_small = fastest(3, || run(&small));
    let t_big = fastest(3, || run(&big));
    let ratio = t_big / t_small;
    eprintln!("merge: 1,000 sets in {t_small:.3} s, 10,000 in {t_big:.3} s, ratio {ratio:.1}");
    assert!(ratio < 30.0, "ratio {ratio:.1}; expected about 10");
}

#[test]
fn a_merge_whose_matrix_exceeds_the_budget_is_refused() {
    // 4,000 one-entry sets on distinct DOF pairs merge into a 4,000 × 4,000
    // matrix: 4000² × 4 lines × 16 bytes = 1.02 GB fits the default budget
    // of 2 GiB but not one of 1 GB; 3 sets need 3 × 3 × 4 × 16 = 576 bytes
    let at = |m: u64| Limits {
        memory_bytes: m,
        ..Limits::default()
    };
    let e = io::merge::merge_with_limits(deliveries(4_000, false), &at(1_000_000_000)).unwrap_err();
    assert_eq!(e.kind, ErrorKind::Budget, "{e}");
    assert!(
        e.message.contains("4 lines × 4000 outputs × 4000 inputs"),
        "{e}"
    );
    assert!(io::merge::merge_with_limits(deliveries(3, false), &at(576)).is_ok());
    let e = io::merge::merge_with_limits(deliveries(3, false), &at(575)).unwrap_err();
    assert_eq!(e.kind, ErrorKind::Budget, "{e}");
}
