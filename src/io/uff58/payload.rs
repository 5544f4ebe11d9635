//! 58b payloads: their raw IEEE numbers decoded, and an even-grid payload
//! left in the file ([`Payload`]) until its values are placed.
//!
//! The reader that builds sets ([`super::read_all`]) does not copy an even
//! 58b dataset's values into the dataset: the parse checks them (finite,
//! as any dataset's) and notes where they stand; the grouping reads them
//! from the file's bytes straight into the set's line-major matrix. That
//! saves a copy of every value and the memory it takes (the file and the
//! set are then all that is held). Every value is decoded by the same
//! function either way, so the numbers are those of the copying path;
//! [`super::records::Dataset58::fill_from`] makes the copy where anything
//! else needs the values (spectra, coherence, time, a dataset 164's units).

use num_complex::Complex64;

/// `f` of each of the file's numbers in `data` (its byte order, 8-byte
/// doubles or 4-byte singles widened exactly): one loop per byte order and
/// size over exact chunks, no index arithmetic or bounds check per value.
#[inline(always)]
fn each_number(data: &[u8], double: bool, big_endian: bool, mut f: impl FnMut(f64)) {
    match (double, big_endian) {
        (true, false) => data.chunks_exact(8).for_each(|c| f(number(c, true, false))),
        (true, true) => data.chunks_exact(8).for_each(|c| f(number(c, true, true))),
        (false, false) => data
            .chunks_exact(4)
            .for_each(|c| f(number(c, false, false))),
        (false, true) => data.chunks_exact(4).for_each(|c| f(number(c, false, true))),
    }
}

/// The file's numbers in `data` appended to `vals`.
pub(super) fn decode_into(data: &[u8], double: bool, big_endian: bool, vals: &mut Vec<f64>) {
    vals.reserve(data.len() / if double { 8 } else { 4 });
    each_number(data, double, big_endian, |v| vals.push(v));
}

/// True when every number in `data` is finite (without a branch per value;
/// where the first one is not, the parse's general path tells).
pub(super) fn all_finite(data: &[u8], double: bool, big_endian: bool) -> bool {
    let mut ok = true;
    each_number(data, double, big_endian, |v| ok &= v.is_finite());
    ok
}

/// An even grid's numbers as points: pairs (real, imaginary) when
/// `complex`, else real values with imaginary part 0.
pub(super) fn points(vals: &[f64], complex: bool) -> Vec<Complex64> {
    if complex {
        vals.chunks_exact(2)
            .map(|v| Complex64::new(v[0], v[1]))
            .collect()
    } else {
        vals.iter().map(|&v| Complex64::new(v, 0.0)).collect()
    }
}

/// One number from the first 8 (double) or 4 (single) bytes of `ch`.
#[inline(always)]
fn number(ch: &[u8], double: bool, big_endian: bool) -> f64 {
    if double {
        let mut a = [0u8; 8];
        a.copy_from_slice(&ch[..8]);
        if big_endian {
            f64::from_be_bytes(a)
        } else {
            f64::from_le_bytes(a)
        }
    } else {
        let mut a = [0u8; 4];
        a.copy_from_slice(&ch[..4]);
        f64::from(if big_endian {
            f32::from_be_bytes(a)
        } else {
            f32::from_le_bytes(a)
        })
    }
}

/// The abscissa of an even grid: `x_min + p·x_inc` for p = 0..n, into `x`
/// (cleared first). The one formula of the parse and of a payload left in
/// the file.
pub(super) fn even_abscissa(x_min: f64, x_inc: f64, n: usize, x: &mut Vec<f64>) {
    x.clear();
    x.extend((0..n).map(|p| x_min + (p as f64) * x_inc));
}

/// An even-grid 58b dataset's values, left in the file: where they start,
/// how many points, and how they are written. Made by the parse only after
/// it checked the bytes hold `n_pts` finite points.
#[derive(Debug, Clone, Copy, PartialEq)]
pub(crate) struct Payload {
    /// Byte offset of the first value in the file.
    pub(crate) at: usize,
    pub(crate) n_pts: usize,
    pub(crate) double: bool,
    pub(crate) big_endian: bool,
    pub(crate) complex: bool,
}

impl Payload {
    fn size(&self) -> usize {
        if self.double {
            8
        } else {
            4
        }
    }

    /// Bytes per point.
    fn stride(&self) -> usize {
        self.size() * if self.complex { 2 } else { 1 }
    }

    /// The payload's bytes (`bytes`: the whole file the parse read).
    fn data<'a>(&self, bytes: &'a [u8]) -> &'a [u8] {
        let end = self
            .at
            .saturating_add(self.n_pts.saturating_mul(self.stride()));
        bytes.get(self.at..end).unwrap_or(&[])
    }

    /// `put(place, value)` for the points `lines` in order, each value as
    /// [`decode_into`] decodes it, zipped with `places` (the common layout,
    /// complex little-endian doubles, in its own loop).
    #[inline]
    pub(crate) fn each<'d, T: 'd>(
        &self,
        bytes: &[u8],
        lines: std::ops::Range<usize>,
        places: impl Iterator<Item = &'d mut T>,
        mut put: impl FnMut(&mut T, Complex64),
    ) {
        let n = lines.len();
        let points = self
            .data(bytes)
            .chunks_exact(self.stride())
            .skip(lines.start)
            .take(n);
        if (self.double, self.big_endian, self.complex) == (true, false, true) {
            for (d, ch) in places.zip(points) {
                put(
                    d,
                    Complex64::new(number(ch, true, false), number(&ch[8..], true, false)),
                );
            }
            return;
        }
        let size = self.size();
        for (d, ch) in places.zip(points) {
            let re = number(ch, self.double, self.big_endian);
            let im = if self.complex {
                number(&ch[size..], self.double, self.big_endian)
            } else {
                0.0
            };
            put(d, Complex64::new(re, im));
        }
    }

    /// All values, as the parse decodes them.
    pub(super) fn values(&self, bytes: &[u8]) -> Vec<Complex64> {
        let mut vals = Vec::with_capacity(self.n_pts * if self.complex { 2 } else { 1 });
        decode_into(self.data(bytes), self.double, self.big_endian, &mut vals);
        points(&vals, self.complex)
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    /// Reference: the numbers' IEEE 754 encodings as Rust's standard
    /// library writes them (`to_le_bytes`, `to_be_bytes`; a single widened
    /// exactly by `f64::from`), against both ways a payload is read.
    #[test]
    fn a_point_decodes_as_the_whole_payload_in_every_byte_order_and_size() {
        let nums = [1.5f64, -2.25e-300, 3.0e12, -0.0, 7.125, 1e-5];
        for double in [true, false] {
            for big_endian in [true, false] {
                for complex in [true, false] {
                    let mut bytes = vec![0xAAu8; 3];
                    for v in nums {
                        if double {
                            bytes.extend(if big_endian {
                                v.to_be_bytes()
                            } else {
                                v.to_le_bytes()
                            });
                        } else {
                            let s = v as f32;
                            bytes.extend(if big_endian {
                                s.to_be_bytes()
                            } else {
                                s.to_le_bytes()
                            });
                        }
                    }
                    let n_pts = if complex { 3 } else { 6 };
                    let p = Payload {
                        at: 3,
                        n_pts,
                        double,
                        big_endian,
                        complex,
                    };
                    let all = p.values(&bytes);
                    assert_eq!(all.len(), n_pts);
                    // every run of points through `each`, from every start
                    for start in 0..n_pts {
                        let mut got = vec![Complex64::new(9.0, 9.0); n_pts - start];
                        p.each(&bytes, start..n_pts, got.iter_mut(), |d, v| *d = v);
                        for (q, v) in got.iter().zip(&all[start..]) {
                            assert_eq!(
                                (q.re.to_bits(), q.im.to_bits()),
                                (v.re.to_bits(), v.im.to_bits())
                            );
                        }
                    }
                    for (k, q) in all.iter().enumerate() {
                        // the numbers themselves, independently of decode_into
                        let w = |i: usize| {
                            if double {
                                nums[i]
                            } else {
                                f64::from(nums[i] as f32)
                            }
                        };
                        let want = if complex {
                            Complex64::new(w(2 * k), w(2 * k + 1))
                        } else {
                            Complex64::new(w(k), 0.0)
                        };
                        assert_eq!(
                            (q.re.to_bits(), q.im.to_bits()),
                            (want.re.to_bits(), want.im.to_bits())
                        );
                    }
                    assert!(all_finite(&bytes[3..], double, big_endian));
                    // bytes shorter than the payload: no value, never a read
                    // out of bounds
                    let mut got = vec![Complex64::new(9.0, 9.0); n_pts];
                    p.each(
                        &bytes[..bytes.len() - 1],
                        0..n_pts,
                        got.iter_mut(),
                        |d, v| *d = v,
                    );
                    assert_eq!(got[0], Complex64::new(9.0, 9.0));
                }
            }
        }
        let mut bad = 1.0f64.to_le_bytes().to_vec();
        bad.extend(f64::INFINITY.to_le_bytes());
        assert!(!all_finite(&bad, true, false));
        assert!(!all_finite(&f32::NAN.to_be_bytes(), false, true));
    }
}
