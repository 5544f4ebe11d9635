//! A set's line-major matrix from its datasets' values: each dataset gives
//! one entry (a column of the matrix in every line), held in memory or left
//! in the file (payload.rs).
//!
//! The matrix is written a tile of lines at a time: the tile NaN first
//! (the entries no dataset gives), then each entry's run of lines into it,
//! while the tile stays in the cache, so each value goes to memory once.
//! Natively, a large matrix's tiles are split over threads (disjoint lines;
//! the values do not depend on the split). Every present value written is
//! checked finite on the way, so the set's own check need not read the
//! matrix again ([`crate::frf::FrfSet::validate_layout`]).

use super::payload::Payload;
use num_complex::Complex64;
use std::mem::MaybeUninit;
use std::ops::Range;

/// An entry's values in SI: held, or left in the file with the factor to
/// SI (the products `v * factor`, formed as they are placed, the same as
/// the held values' `scaled`).
pub(super) enum Values {
    Held(Vec<Complex64>),
    InFile(Payload, f64),
}

impl Values {
    /// Lines `lines` of the values times `sign` into every `stride`-th
    /// place of `dst` from its first (`bytes`: the file parsed). True when
    /// every line got its value and every value is finite: lines past the
    /// values' end (which a group's grid rules out) are left as they are
    /// and answer false, so the set's whole check then names them.
    fn put(
        &self,
        bytes: &[u8],
        lines: Range<usize>,
        sign: f64,
        dst: &mut [MaybeUninit<Complex64>],
        stride: usize,
    ) -> bool {
        let places = dst.iter_mut().step_by(stride);
        let (mut ok, mut written) = (true, 0usize);
        let n = lines.len();
        let mut write = |d: &mut MaybeUninit<Complex64>, w: Complex64| {
            ok &= w.re.is_finite() & w.im.is_finite();
            written += 1;
            d.write(w);
        };
        match self {
            Values::Held(v) => {
                let v = v.get(lines).unwrap_or(&[]);
                places.zip(v).for_each(|(d, v)| write(d, v * sign));
            }
            Values::InFile(p, factor) => {
                let f = *factor;
                let scaled = |v: Complex64| if f != 1.0 { v * f } else { v };
                p.each(bytes, lines, places, |d, v| write(d, scaled(v) * sign));
            }
        }
        ok && written == n
    }
}

/// One entry of the set: its values, its place in a line (output index ×
/// inputs + input index) and its sign.
pub(super) struct Column<'a> {
    pub(super) values: &'a Values,
    pub(super) place: usize,
    pub(super) sign: f64,
}

/// Lines per tile: 64 lines of a 500 × 2 set are 1 MB.
const TILE: usize = 64;

/// Matrices from this size on are filled on several threads (natively).
#[cfg(not(target_arch = "wasm32"))]
const THREADS_FROM: usize = 8 << 20;

/// The `n_lines` × `per_line` matrix, line-major, of `cols` (NaN where no
/// column stands), in huge pages when large; and whether every value of
/// the columns is finite.
pub(super) fn line_major(
    bytes: &[u8],
    cols: &[Column],
    n_lines: usize,
    per_line: usize,
) -> (Vec<Complex64>, bool) {
    let total = n_lines * per_line;
    let mut data: Vec<Complex64> = crate::mem::large_vec(total);
    if total == 0 {
        return (data, true);
    }
    let ok = fill(
        bytes,
        cols,
        per_line,
        &mut data.spare_capacity_mut()[..total],
    );
    // SAFETY: the capacity is at least `total` (large_vec), and `fill`
    // wrote each of the first `total` places: every tile whole with NaN,
    // then the columns' values over it.
    unsafe { data.set_len(total) };
    (data, ok)
}

/// Every place of `dst` (whole lines of `per_line`) written; see the
/// module docs.
fn fill(
    bytes: &[u8],
    cols: &[Column],
    per_line: usize,
    dst: &mut [MaybeUninit<Complex64>],
) -> bool {
    let tiles = |first_line: usize, part: &mut [MaybeUninit<Complex64>]| -> bool {
        let mut ok = true;
        for (t, tile) in part.chunks_mut(TILE * per_line).enumerate() {
            let k0 = first_line + t * TILE;
            let k1 = k0 + tile.len() / per_line;
            tile.fill(MaybeUninit::new(Complex64::new(f64::NAN, f64::NAN)));
            for c in cols {
                ok &= c
                    .values
                    .put(bytes, k0..k1, c.sign, &mut tile[c.place..], per_line);
            }
        }
        ok
    };
    #[cfg(not(target_arch = "wasm32"))]
    {
        let threads = std::thread::available_parallelism().map_or(1, |n| n.get().min(4));
        let n_lines = dst.len() / per_line;
        if threads > 1 && std::mem::size_of_val(dst) >= THREADS_FROM && n_lines >= 2 * TILE {
            // whole tiles per thread, in line order
            let per_thread = n_lines.div_ceil(TILE).div_ceil(threads) * TILE;
            return std::thread::scope(|sc| {
                let tiles = &tiles;
                let handles: Vec<_> = dst
                    .chunks_mut(per_thread * per_line)
                    .enumerate()
                    .map(|(i, part)| sc.spawn(move || tiles(i * per_thread, part)))
                    .collect();
                // a thread that failed (it cannot panic on these values) is
                // reported as a value not finite: the set's own check then
                // reads the matrix
                handles
                    .into_iter()
                    .fold(true, |ok, h| ok & h.join().unwrap_or(false))
            });
        }
    }
    tiles(0, dst)
}

#[cfg(test)]
mod tests {
    use super::*;

    /// The matrix is the same, value for value, on one thread and on
    /// several, with missing places NaN and a non-finite value told.
    /// Reference: the values the test puts in, computed in the test (common
    /// practice: a layout change must not change a value).
    #[test]
    fn tiles_and_threads_place_every_value_and_nan_elsewhere() {
        let (n_lines, n_out, n_in) = (333, 70, 3);
        let per_line = n_out * n_in;
        // held columns at every third place, one left in the file
        let held: Vec<Values> = (0..per_line)
            .map(|m| {
                Values::Held(
                    (0..n_lines)
                        .map(|k| Complex64::new(m as f64 + 0.25, -(k as f64)))
                        .collect(),
                )
            })
            .collect();
        let mut bytes = vec![0u8; 5];
        for k in 0..n_lines {
            bytes.extend((k as f64 * 0.5).to_le_bytes());
            bytes.extend(1.0f64.to_le_bytes());
        }
        let in_file = Values::InFile(
            Payload {
                at: 5,
                n_pts: n_lines,
                double: true,
                big_endian: false,
                complex: true,
            },
            2.0,
        );
        let mut cols: Vec<Column> = (0..per_line)
            .step_by(3)
            .map(|m| Column {
                values: &held[m],
                place: m,
                sign: if m % 2 == 0 { 1.0 } else { -1.0 },
            })
            .collect();
        cols.push(Column {
            values: &in_file,
            place: 1,
            sign: -1.0,
        });
        let want = |k: usize, m: usize| -> Option<Complex64> {
            if m == 1 {
                Some(Complex64::new(k as f64 * 0.5, 1.0) * 2.0 * -1.0)
            } else if m % 3 == 0 {
                let s = if m % 2 == 0 { 1.0 } else { -1.0 };
                Some(Complex64::new(m as f64 + 0.25, -(k as f64)) * s)
            } else {
                None
            }
        };
        // one thread (tiles only), and the threaded path on a larger copy
        let mut one = vec![MaybeUninit::new(Complex64::new(7.0, 7.0)); n_lines * per_line];
        assert!(fill(&bytes, &cols, per_line, &mut one));
        let (data, ok) = line_major(&bytes, &cols, n_lines, per_line);
        assert!(ok);
        for k in 0..n_lines {
            for m in 0..per_line {
                // SAFETY: `fill` wrote every place (the test starts them at 7)
                let a = unsafe { one[k * per_line + m].assume_init() };
                let b = data[k * per_line + m];
                match want(k, m) {
                    Some(w) => assert!(a == w && b == w, "line {k}, place {m}"),
                    None => assert!(a.re.is_nan() && b.re.is_nan(), "line {k}, place {m}"),
                }
            }
        }
        // the largest finite value is finite; an infinite one is told
        let big = Values::Held(vec![Complex64::new(f64::MAX, 0.0); n_lines]);
        let cols = [Column {
            values: &big,
            place: 0,
            sign: 1.0,
        }];
        assert!(line_major(&bytes, &cols, n_lines, 1).1);
        let twice = Values::Held(vec![Complex64::new(f64::INFINITY, 0.0); n_lines]);
        let cols = [Column {
            values: &twice,
            place: 0,
            sign: 1.0,
        }];
        assert!(!line_major(&bytes, &cols, n_lines, 1).1);
        // a column shorter than the lines (which a group's grid rules out)
        // is not reported finite: its places stay NaN for the whole check
        let short = Values::Held(vec![Complex64::new(1.0, 0.0); n_lines - 1]);
        let cols = [Column {
            values: &short,
            place: 0,
            sign: 1.0,
        }];
        let (data, ok) = line_major(&bytes, &cols, n_lines, 1);
        assert!(!ok && data[n_lines - 1].re.is_nan() && data[0].re == 1.0);
    }

    /// A matrix large enough for threads holds every value put in, at its
    /// place (common practice: splitting work over threads must not change
    /// a bit).
    #[test]
    fn a_large_matrix_on_threads_equals_one_thread() {
        let (n_lines, per_line) = (1100, 600); // 10.6 MB: threads natively
        let held: Vec<Values> = (0..per_line)
            .map(|m| {
                Values::Held(
                    (0..n_lines)
                        .map(|k| Complex64::new(k as f64, m as f64))
                        .collect(),
                )
            })
            .collect();
        let cols: Vec<Column> = (0..per_line)
            .filter(|m| m % 5 != 2)
            .map(|m| Column {
                values: &held[m],
                place: m,
                sign: 1.0,
            })
            .collect();
        let (data, ok) = line_major(&[], &cols, n_lines, per_line);
        assert!(ok);
        for k in 0..n_lines {
            for m in 0..per_line {
                let v = data[k * per_line + m];
                if m % 5 == 2 {
                    assert!(v.re.is_nan() && v.im.is_nan());
                } else {
                    assert_eq!(v, Complex64::new(k as f64, m as f64));
                }
            }
        }
    }
}
