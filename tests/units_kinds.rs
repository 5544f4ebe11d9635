//! Kind conversions against values worked by hand, and unit factors against
//! their definitions.

use mortise::frf::{Direction, Dof, FrfSet};
use mortise::units::{factor_for, parse_unit, ratio_factor, Quantity};
use num_complex::Complex64;

fn one(h: Complex64, f: f64) -> FrfSet {
    let d = Dof::new("c", "1", Direction::Z);
    let mut s = FrfSet::zeros(
        "h",
        vec![f],
        vec![d.clone()],
        vec![d],
        Quantity::Displacement,
        Quantity::Force,
    );
    s.set(0, 0, 0, h);
    s
}

fn close(a: Complex64, b: Complex64, tol: f64) -> bool {
    (a - b).norm() <= tol * b.norm()
}

#[test]
fn mobility_and_accelerance_worked_by_hand() {
    // Worked by hand (e^{+iωt}): at f = 10 Hz, ω = 2π·10 = 62.831853071795862 rad/s,
    // ω² = 3947.8417604357434. A receptance of 1e-6 m/N gives
    // mobility iω·H = i·6.2831853071795862e-5 (m/s)/N and
    // accelerance −ω²·H = −3.9478417604357434e-3 (m/s²)/N.
    let s = one(Complex64::new(1e-6, 0.0), 10.0);
    let y = s.to_kind("mobility").unwrap();
    assert!(close(
        y.get(0, 0, 0),
        Complex64::new(0.0, 6.283_185_307_179_586e-5),
        1e-15
    ));
    let a = s.to_kind("accelerance").unwrap();
    assert!(close(
        a.get(0, 0, 0),
        Complex64::new(-3.947_841_760_435_743_4e-3, 0.0),
        1e-15
    ));

    // At f = 50 Hz, ω = 314.15926535897932, a receptance (2 − 3i)·1e-7 m/N:
    // iω·H = ω·(3 + 2i)·1e-7 = 9.4247779607693797e-5 + 6.2831853071795865e-5 i;
    // −ω²·H with ω² = 98696.044010893586: −1.9739208802178717e-2 + 2.9608813203268076e-2 i.
    let s = one(Complex64::new(2e-7, -3e-7), 50.0);
    let y = s.to_kind("mobility").unwrap();
    assert!(close(
        y.get(0, 0, 0),
        Complex64::new(9.424_777_960_769_38e-5, 6.283_185_307_179_586e-5),
        1e-14
    ));
    let a = s.to_kind("accelerance").unwrap();
    assert!(close(
        a.get(0, 0, 0),
        Complex64::new(-1.973_920_880_217_871_7e-2, 2.960_881_320_326_807_6e-2),
        1e-14
    ));
    // and back: accelerance → receptance
    let r = a.to_kind("receptance").unwrap();
    assert!(close(r.get(0, 0, 0), Complex64::new(2e-7, -3e-7), 1e-14));
}

#[test]
fn unit_factors_match_their_definitions() {
    // ISO 80000-3: standard acceleration of gravity g_n = 9.80665 m/s².
    assert_eq!(
        factor_for("g", Quantity::Acceleration, false).unwrap(),
        9.80665
    );
    // 1959 international yard and pound: 1 in = 0.0254 m, 1 lbf = 0.45359237 kg × g_n = 4.4482216152605 N.
    assert_eq!(
        factor_for("in", Quantity::Displacement, false).unwrap(),
        0.0254
    );
    assert!(
        (factor_for("lbf", Quantity::Force, false).unwrap() - 0.453_592_37 * 9.80665).abs() < 1e-15
    );
    // in/s per lbf (mobility in imperial units) = 0.0254 / 4.4482216152605 (m/s)/N
    let f = ratio_factor(
        "in/s/lbf",
        Quantity::Velocity,
        false,
        Quantity::Force,
        false,
    )
    .unwrap();
    assert!((f - 0.0254 / 4.448_221_615_260_5).abs() < 1e-18);
    // N/mm = 1000 N/m (SI prefix milli = 1e-3)
    assert!((parse_unit("N/mm").unwrap().factor - 1000.0).abs() < 1e-12);
    // an unknown unit is an error, never a factor of 1
    assert!(parse_unit("gal").is_err());
}
