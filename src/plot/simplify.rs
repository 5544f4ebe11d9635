//! Polylines in pixels with the points a stroke cannot show left out: a
//! point is dropped when the polyline through the kept points passes within
//! [`TOLERANCE_PX`] of it, so the drawn line differs from the full one by
//! less than a pixel's width anywhere, and every peak, notch and corner
//! (a point farther than that from the chord of its neighbours) is kept.
//!
//! A resonance curve of 1,000 lines across 1,400 px is mostly gentle
//! arcs, each of which a few chords draw to within a third of a pixel;
//! stroking 150 such curves is then several times less work for the canvas
//! and the SVG is several times smaller, with the same picture.
//!
//! The method is sleeve fitting (after Zhao and Saalfeld, "Linear-time
//! sleeve-fitting polyline simplification algorithms", AutoCarto 1997; from
//! memory): from the last kept point, the directions of a chord that passes
//! within the tolerance of every point since form a cone; a point whose
//! direction leaves the cone, or that comes back towards the kept point,
//! ends the chord at the point before it. One pass, O(n).

/// How far (px) a left-out point may lie from the drawn polyline.
pub(super) const TOLERANCE_PX: f64 = 0.3;

/// z-component of the cross product a × b.
fn cross(a: (f64, f64), b: (f64, f64)) -> f64 {
    a.0 * b.1 - a.1 * b.0
}

/// `u` (unit) turned by the angle whose sine is `s` and cosine `c`.
fn turn(u: (f64, f64), s: f64, c: f64) -> (f64, f64) {
    (u.0 * c - u.1 * s, u.0 * s + u.1 * c)
}

/// The polyline `line` (pixels) with the points within `tol` of the chords
/// between kept points left out; the first and last points are kept.
///
/// The cone is kept as its two bounding unit directions (lo turned
/// clockwise of hi by less than π, as each point's own cone is narrower than
/// π), tested by cross products: no angle functions in the loop.
pub(super) fn simplify(line: &[(f64, f64)], tol: f64) -> Vec<(f64, f64)> {
    if line.len() <= 2 {
        return line.to_vec();
    }
    let mut out = Vec::with_capacity(line.len() / 4 + 2);
    let mut anchor = line[0];
    out.push(anchor);
    let mut cone: Option<((f64, f64), (f64, f64))> = None;
    let mut last_d = 0.0;
    let mut i = 1;
    while i < line.len() {
        let p = line[i];
        let v = (p.0 - anchor.0, p.1 - anchor.1);
        // no overflow to guard against in pixels: sqrt is several times faster than hypot
        let d = (v.0 * v.0 + v.1 * v.1).sqrt();
        if d <= tol {
            if cone.is_none() {
                // still within the tolerance of the kept point: no direction yet
                i += 1;
                continue;
            }
            // back near the kept point after leaving it: the chord ends
            anchor = line[i - 1];
            out.push(anchor);
            cone = None;
            last_d = 0.0;
            continue;
        }
        let fits = match cone {
            None => true,
            Some((lo, hi)) => d >= last_d && cross(lo, v) >= 0.0 && cross(v, hi) >= 0.0,
        };
        if !fits {
            // the chord ends at the previous point, which starts the next
            anchor = line[i - 1];
            out.push(anchor);
            cone = None;
            last_d = 0.0;
            continue; // the same point again, from the new anchor
        }
        let u = (v.0 / d, v.1 / d);
        let s = tol / d;
        let c = (1.0 - s * s).sqrt();
        let (plo, phi) = (turn(u, -s, c), turn(u, s, c));
        cone = Some(match cone {
            None => (plo, phi),
            Some((lo, hi)) => (
                if cross(lo, plo) > 0.0 { plo } else { lo },
                if cross(phi, hi) > 0.0 { phi } else { hi },
            ),
        });
        last_d = d;
        i += 1;
    }
    let end = line[line.len() - 1];
    if out.last() != Some(&end) {
        out.push(end);
    }
    out
}

#[cfg(test)]
mod tests {
    use super::*;

    /// Distance from `p` to the segment a–b.
    fn to_segment(p: (f64, f64), a: (f64, f64), b: (f64, f64)) -> f64 {
        let (vx, vy) = (b.0 - a.0, b.1 - a.1);
        let l2 = vx * vx + vy * vy;
        let t = if l2 == 0.0 {
            0.0
        } else {
            (((p.0 - a.0) * vx + (p.1 - a.1) * vy) / l2).clamp(0.0, 1.0)
        };
        (p.0 - a.0 - t * vx).hypot(p.1 - a.1 - t * vy)
    }

    /// Every point of `full` lies within `tol` of the simplified polyline
    /// (brute force, the reference), and the kept points are points of it
    /// in their order.
    fn check(full: &[(f64, f64)], tol: f64) -> usize {
        let s = simplify(full, tol);
        assert_eq!(s.first(), full.first());
        assert_eq!(s.last(), full.last());
        let mut k = 0;
        for q in &s {
            while full[k] != *q {
                k += 1;
            }
        }
        for p in full {
            let d = s
                .windows(2)
                .map(|w| to_segment(*p, w[0], w[1]))
                .fold(f64::INFINITY, f64::min);
            assert!(
                d <= tol * (1.0 + 1e-9),
                "point {p:?} is {d} px from the drawn line"
            );
        }
        s.len()
    }

    #[test]
    fn a_straight_run_becomes_one_chord() {
        let line: Vec<(f64, f64)> = (0..100).map(|k| (k as f64, 2.0 * k as f64)).collect();
        assert_eq!(simplify(&line, 0.3), vec![(0.0, 0.0), (99.0, 198.0)]);
    }

    #[test]
    fn a_resonance_keeps_its_peak_and_stays_within_the_tolerance() {
        // |H| of a single-DOF system in dB over 1,000 lines on 1,400 px
        let line: Vec<(f64, f64)> = (0..1000)
            .map(|k| {
                let r = 0.2 + 1.8 * k as f64 / 999.0;
                let h = 1.0 / ((1.0 - r * r).powi(2) + (0.02 * r).powi(2)).sqrt();
                (k as f64 * 1.4, 300.0 - 8.0 * 20.0 * h.log10())
            })
            .collect();
        let n = check(&line, TOLERANCE_PX);
        let peak = line
            .iter()
            .cloned()
            .fold((0.0, f64::INFINITY), |a, p| if p.1 < a.1 { p } else { a });
        assert!(simplify(&line, TOLERANCE_PX).contains(&peak));
        assert!(n < 250, "{n} points kept of 1000");
    }

    #[test]
    fn random_walks_and_loops_stay_within_the_tolerance() {
        // a seeded random walk (noisy data) and a Nyquist-like spiral
        let mut x = 0x2545F4914F6CDD1Du64;
        let mut rnd = || {
            x ^= x << 13;
            x ^= x >> 7;
            x ^= x << 17;
            (x >> 11) as f64 / (1u64 << 53) as f64 - 0.5
        };
        let mut y = 100.0;
        let walk: Vec<(f64, f64)> = (0..2000)
            .map(|k| {
                y += rnd() * 3.0;
                (k as f64 * 0.7, y)
            })
            .collect();
        check(&walk, TOLERANCE_PX);
        let spiral: Vec<(f64, f64)> = (0..3000)
            .map(|k| {
                let t = k as f64 * 0.01;
                (
                    200.0 + (50.0 + 10.0 * t) * t.cos(),
                    200.0 + (50.0 + 10.0 * t) * t.sin(),
                )
            })
            .collect();
        check(&spiral, TOLERANCE_PX);
        // going back along the same line is not left out
        let back = vec![(0.0, 0.0), (10.0, 0.0), (5.0, 0.0), (20.0, 0.0)];
        assert_eq!(simplify(&back, 0.3).len(), 4);
    }
}
