//! Physical quantities, unit strings and their conversion to SI.
//!
//! A unit string is parsed into a [`Unit`]: a dimension (exponents of length,
//! mass, time and plane angle) and a factor to SI. Products use `*`, `.` or a
//! space, quotients `/`, powers `^n` or a trailing digit (`m/s2`), and
//! parentheses group (`(m/s)/N`), `²` and `³` are powers (`m/s²`). Prefixes
//! p n u µ μ m c d k M G apply to m, s, N, Pa, g (gram only inside `kg`), rad.
//! A square root (`√Hz`, `sqrt(Hz)`) is parsed too: [`parse_unit`] refuses a
//! unit left with a half power (an amplitude spectral density such as
//! `m/s/√Hz` is not a unit of any quantity), [`parse_unit_squared`] gives the
//! square of such a unit (`(m/s)²/Hz`), which is how spectral densities are
//! read.
//!
//! Conventions fixed here (sources beside each):
//! * `g` is the standard acceleration of gravity, 9.80665 m/s² (ISO 80000-3);
//!   vibration practice writes accelerations in g, so `g` never means gram.
//! * `in` = 0.0254 m, `ft` = 0.3048 m, `lbf` = 4.4482216152605 N
//!   (international yard and pound agreement, 1959).
//! * `deg` = π/180 rad.
//!
//! An unknown unit is an error, never a silent factor of 1.

use crate::error::{Error, Result};
use std::fmt;

/// Standard acceleration of gravity in m/s² (ISO 80000-3).
pub const G_N: f64 = 9.80665;
/// One inch in metres (1959 definition).
pub const INCH: f64 = 0.0254;
/// One pound-force in newtons (1959 definition of the pound with g_n).
pub const LBF: f64 = 4.448_221_615_260_5;

/// Exponents of length, mass, time and plane angle.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default, serde::Serialize, serde::Deserialize)]
pub struct Dim {
    pub length: i8,
    pub mass: i8,
    pub time: i8,
    pub angle: i8,
}

impl Dim {
    pub const NONE: Dim = Dim::new(0, 0, 0, 0);
    pub const fn new(length: i8, mass: i8, time: i8, angle: i8) -> Self {
        Dim {
            length,
            mass,
            time,
            angle,
        }
    }
    pub fn times(self, o: Dim) -> Dim {
        Dim::new(
            self.length + o.length,
            self.mass + o.mass,
            self.time + o.time,
            self.angle + o.angle,
        )
    }
    pub fn pow(self, n: i8) -> Dim {
        Dim::new(
            self.length * n,
            self.mass * n,
            self.time * n,
            self.angle * n,
        )
    }
    pub fn inv(self) -> Dim {
        self.pow(-1)
    }
    /// Same dimension once plane angle is ignored (rad is dimensionless in SI).
    pub fn eq_ignoring_angle(self, o: Dim) -> bool {
        self.length == o.length && self.mass == o.mass && self.time == o.time
    }
}

/// A parsed unit: value_in_SI = value_in_unit × `factor`.
#[derive(Debug, Clone, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct Unit {
    /// The text as given.
    pub text: String,
    pub dim: Dim,
    pub factor: f64,
}

impl fmt::Display for Unit {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        write!(f, "{}", self.text)
    }
}

const PREFIXES: &[(&str, f64)] = &[
    ("p", 1e-12),
    ("n", 1e-9),
    ("u", 1e-6),
    ("µ", 1e-6),
    ("μ", 1e-6),
    ("m", 1e-3),
    ("c", 1e-2),
    ("d", 1e-1),
    ("k", 1e3),
    ("M", 1e6),
    ("G", 1e9),
];

/// Atoms that take prefixes.
const PREFIXABLE: &[(&str, Dim, f64)] = &[
    ("m", Dim::new(1, 0, 0, 0), 1.0),
    ("s", Dim::new(0, 0, 1, 0), 1.0),
    ("N", Dim::new(1, 1, -2, 0), 1.0),
    ("Pa", Dim::new(-1, 1, -2, 0), 1.0),
    ("rad", Dim::new(0, 0, 0, 1), 1.0),
];

/// Atoms that never take prefixes (checked first, exact match).
fn plain_atom(s: &str) -> Option<(Dim, f64)> {
    let a = match s {
        "1" | "-" | "" => (Dim::NONE, 1.0),
        "kg" => (Dim::new(0, 1, 0, 0), 1.0),
        "g" | "gn" | "G_n" => (Dim::new(1, 0, -2, 0), G_N),
        "in" | "inch" => (Dim::new(1, 0, 0, 0), INCH),
        "ft" => (Dim::new(1, 0, 0, 0), 0.3048),
        "lbf" => (Dim::new(1, 1, -2, 0), LBF),
        "deg" | "°" | "degree" => (Dim::new(0, 0, 0, 1), std::f64::consts::PI / 180.0),
        "Hz" => (Dim::new(0, 0, -1, 0), 1.0),
        "min" => (Dim::new(0, 0, 1, 0), 60.0),
        "bar" => (Dim::new(-1, 1, -2, 0), 1e5),
        "psi" => (Dim::new(-1, 1, -2, 0), LBF / (INCH * INCH)),
        "ips" => (Dim::new(1, 0, -1, 0), INCH),
        _ => return None,
    };
    Some(a)
}

fn atom(s: &str) -> Option<(Dim, f64)> {
    if let Some(a) = plain_atom(s) {
        return Some(a);
    }
    for (name, dim, f) in PREFIXABLE {
        if s == *name {
            return Some((*dim, *f));
        }
    }
    for (p, pf) in PREFIXES {
        if let Some(rest) = s.strip_prefix(p) {
            for (name, dim, f) in PREFIXABLE {
                if rest == *name {
                    return Some((*dim, f * pf));
                }
            }
        }
    }
    None
}

struct UnitParser<'a> {
    chars: Vec<char>,
    pos: usize,
    text: &'a str,
}

impl UnitParser<'_> {
    fn err(&self, what: &str) -> Error {
        Error::unit(format!(
            "unit '{}': {what} at character {}; expected a unit such as m/s, mm, g, N, lbf, Pa, m/s^2, N/mm, rad, deg",
            crate::error::quote(self.text),
            self.pos + 1
        ))
    }
    fn skip_ws(&mut self) {
        while self.pos < self.chars.len() && self.chars[self.pos] == ' ' {
            self.pos += 1;
        }
    }
    fn peek(&self) -> Option<char> {
        self.chars.get(self.pos).copied()
    }
    // Dimensions inside the parser are doubled exponents, so a square
    // root halves them without leaving the integers.
    // expr := term (('*'|'.'|' '|'/') term)*
    fn expr(&mut self) -> Result<(Dim, f64)> {
        let (mut dim, mut f) = self.term()?;
        loop {
            self.skip_ws();
            match self.peek() {
                Some('/') => {
                    self.pos += 1;
                    let (d, g) = self.term()?;
                    dim = dim.times(d.inv());
                    f /= g;
                }
                Some('*') | Some('.') | Some('·') => {
                    self.pos += 1;
                    let (d, g) = self.term()?;
                    dim = dim.times(d);
                    f *= g;
                }
                Some(')') | None => return Ok((dim, f)),
                Some(_) => {
                    // implicit product after a space: "N m"
                    if self.pos > 0 && self.chars[self.pos - 1] == ' ' {
                        let (d, g) = self.term()?;
                        dim = dim.times(d);
                        f *= g;
                    } else {
                        return Err(self.err("unexpected character"));
                    }
                }
            }
        }
    }
    // term := ('√' | 'sqrt')? (atom | '(' expr ')') power?
    fn term(&mut self) -> Result<(Dim, f64)> {
        self.skip_ws();
        let sqrt_name: Vec<char> = "sqrt(".chars().collect();
        if self.peek() == Some('√') {
            self.pos += 1;
            return self.root();
        }
        if self.chars[self.pos..].starts_with(&sqrt_name) {
            self.pos += 4;
            return self.root();
        }
        let (dim, f) = if self.peek() == Some('(') {
            self.parenthesised()?
        } else {
            let start = self.pos;
            while let Some(c) = self.peek() {
                if c.is_alphabetic() || c == 'µ' || c == 'μ' || c == '°' || c == '_' {
                    self.pos += 1;
                } else {
                    break;
                }
            }
            if self.pos == start {
                // a bare "1" as in 1/s
                if self.peek() == Some('1') {
                    self.pos += 1;
                    return Ok((Dim::NONE, 1.0));
                }
                return Err(self.err("expected a unit name"));
            }
            let name: String = self.chars[start..self.pos].iter().collect();
            let (d, f) = atom(&name).ok_or_else(|| {
                Error::unit(format!(
                    "unit '{}': unknown unit name '{}'; known: m s N Pa rad (with prefixes p n u m c d k M G), kg g in ft lbf deg Hz bar psi",
                    crate::error::quote(self.text),
                    crate::error::quote(&name)
                ))
            })?;
            (d.pow(2), f)
        };
        // power
        let mut n: i8 = 1;
        let caret = self.peek() == Some('^');
        if caret {
            self.pos += 1;
        }
        let neg = if self.peek() == Some('-') {
            self.pos += 1;
            true
        } else {
            false
        };
        let start = self.pos;
        while let Some(c) = self.peek() {
            if c.is_ascii_digit() {
                self.pos += 1;
            } else {
                break;
            }
        }
        if self.pos > start {
            let s: String = self.chars[start..self.pos].iter().collect();
            n = s.parse::<i8>().map_err(|_| self.err("power too large"))?;
        } else if neg || caret {
            return Err(self.err("expected digits for the power"));
        } else if let Some(c) = self.peek() {
            n = match c {
                '²' => {
                    self.pos += 1;
                    2
                }
                '³' => {
                    self.pos += 1;
                    3
                }
                _ => 1,
            };
        }
        if neg {
            n = -n;
        }
        let big = [dim.length, dim.mass, dim.time, dim.angle]
            .iter()
            .any(|e| (*e as i32 * n as i32).abs() > 100);
        if big {
            return Err(self.err("power too large"));
        }
        Ok((dim.pow(n), f.powi(n as i32)))
    }
    // at '(': the unit inside the parentheses
    fn parenthesised(&mut self) -> Result<(Dim, f64)> {
        self.pos += 1;
        let v = self.expr()?;
        self.skip_ws();
        if self.peek() != Some(')') {
            return Err(self.err("missing ')'"));
        }
        self.pos += 1;
        Ok(v)
    }

    // after '√' or 'sqrt': a unit name or a parenthesised unit, no power
    fn root(&mut self) -> Result<(Dim, f64)> {
        self.skip_ws();
        let (d, f) = if self.peek() == Some('(') {
            self.parenthesised()?
        } else {
            let start = self.pos;
            while let Some(c) = self.peek() {
                if c.is_alphabetic() {
                    self.pos += 1;
                } else {
                    break;
                }
            }
            let name: String = self.chars[start..self.pos].iter().collect();
            match atom(&name).filter(|_| !name.is_empty()) {
                Some((d, f)) => (d.pow(2), f),
                None => return Err(self.err("expected a unit name after the square root")),
            }
        };
        if [d.length, d.mass, d.time, d.angle]
            .iter()
            .any(|e| e % 2 != 0)
        {
            return Err(self.err("a square root of a square root"));
        }
        Ok((
            Dim::new(d.length / 2, d.mass / 2, d.time / 2, d.angle / 2),
            f.sqrt(),
        ))
    }
}

/// Run the parser: doubled exponents and the factor.
fn parse_doubled(text: &str) -> Result<(String, Dim, f64)> {
    let t = text.trim();
    let mut p = UnitParser {
        chars: t.chars().collect(),
        pos: 0,
        text: t,
    };
    let (dim, factor) = p.expr()?;
    if p.pos != p.chars.len() {
        return Err(p.err("unexpected ')'"));
    }
    Ok((t.to_string(), dim, factor))
}

/// Parse a unit string.
///
/// ```
/// let u = mortise::units::parse_unit("mm/s").unwrap();
/// assert!((u.factor - 1e-3).abs() < 1e-18);
/// assert!(mortise::units::parse_unit("furlong").is_err());
/// ```
pub fn parse_unit(text: &str) -> Result<Unit> {
    let (t, d, factor) = parse_doubled(text)?;
    if [d.length, d.mass, d.time, d.angle]
        .iter()
        .any(|e| e % 2 != 0)
    {
        return Err(Error::unit(format!(
            "unit '{}' has a half power (a square root such as √Hz); such a unit measures no quantity by itself; expected a unit such as m/s, or an amplitude spectral density label where a spectral density is read",
            crate::error::quote(&t)
        )));
    }
    Ok(Unit {
        text: t,
        dim: Dim::new(d.length / 2, d.mass / 2, d.time / 2, d.angle / 2),
        factor,
    })
}

/// The square of a unit: `m/s/√Hz` gives dimension (m/s)²/Hz and the
/// squared factor. Values in the unit, squared, times `factor` are SI.
///
/// ```
/// let u = mortise::units::parse_unit_squared("mm/s/√Hz").unwrap();
/// assert!((u.factor - 1e-6).abs() < 1e-21);
/// ```
pub fn parse_unit_squared(text: &str) -> Result<Unit> {
    let (t, dim, f) = parse_doubled(text)?;
    Ok(Unit {
        text: t,
        dim,
        factor: f * f,
    })
}

/// The physical quantity on one side of an FRF.
///
/// Motion quantities and loads are generalised: on a rotational DOF (RX, RY,
/// RZ) `Displacement` means rotation angle (rad), `Velocity` angular velocity,
/// `Acceleration` angular acceleration, and `Force` means moment (N·m).
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, serde::Serialize, serde::Deserialize)]
#[serde(rename_all = "kebab-case")]
pub enum Quantity {
    Displacement,
    Velocity,
    Acceleration,
    Force,
    Pressure,
    /// Volume velocity (m³/s), for acoustic sources.
    VolumeVelocity,
    /// A ratio without unit (transmissibility data whose sides are unknown).
    Dimensionless,
}

impl Quantity {
    pub const ALL: [Quantity; 7] = [
        Quantity::Displacement,
        Quantity::Velocity,
        Quantity::Acceleration,
        Quantity::Force,
        Quantity::Pressure,
        Quantity::VolumeVelocity,
        Quantity::Dimensionless,
    ];

    /// The time-derivative order for motions (0, 1, 2); None for others.
    pub fn motion_order(self) -> Option<i32> {
        match self {
            Quantity::Displacement => Some(0),
            Quantity::Velocity => Some(1),
            Quantity::Acceleration => Some(2),
            _ => None,
        }
    }
    pub fn from_motion_order(n: i32) -> Option<Quantity> {
        match n {
            0 => Some(Quantity::Displacement),
            1 => Some(Quantity::Velocity),
            2 => Some(Quantity::Acceleration),
            _ => None,
        }
    }
    pub fn is_motion(self) -> bool {
        self.motion_order().is_some()
    }
    /// SI dimension on a translational (or scalar) DOF.
    pub fn dim(self, rotational: bool) -> Dim {
        match (self, rotational) {
            (Quantity::Displacement, false) => Dim::new(1, 0, 0, 0),
            (Quantity::Velocity, false) => Dim::new(1, 0, -1, 0),
            (Quantity::Acceleration, false) => Dim::new(1, 0, -2, 0),
            (Quantity::Displacement, true) => Dim::new(0, 0, 0, 1),
            (Quantity::Velocity, true) => Dim::new(0, 0, -1, 1),
            (Quantity::Acceleration, true) => Dim::new(0, 0, -2, 1),
            (Quantity::Force, false) => Dim::new(1, 1, -2, 0),
            (Quantity::Force, true) => Dim::new(2, 1, -2, 0),
            (Quantity::Pressure, _) => Dim::new(-1, 1, -2, 0),
            (Quantity::VolumeVelocity, _) => Dim::new(3, 0, -1, 0),
            (Quantity::Dimensionless, _) => Dim::NONE,
        }
    }
    /// SI unit text on a translational or rotational DOF.
    pub fn si_unit(self, rotational: bool) -> &'static str {
        match (self, rotational) {
            (Quantity::Displacement, false) => "m",
            (Quantity::Velocity, false) => "m/s",
            (Quantity::Acceleration, false) => "m/s^2",
            (Quantity::Displacement, true) => "rad",
            (Quantity::Velocity, true) => "rad/s",
            (Quantity::Acceleration, true) => "rad/s^2",
            (Quantity::Force, false) => "N",
            (Quantity::Force, true) => "N*m",
            (Quantity::Pressure, _) => "Pa",
            (Quantity::VolumeVelocity, _) => "m^3/s",
            (Quantity::Dimensionless, _) => "1",
        }
    }
    pub fn name(self) -> &'static str {
        match self {
            Quantity::Displacement => "displacement",
            Quantity::Velocity => "velocity",
            Quantity::Acceleration => "acceleration",
            Quantity::Force => "force",
            Quantity::Pressure => "pressure",
            Quantity::VolumeVelocity => "volume-velocity",
            Quantity::Dimensionless => "dimensionless",
        }
    }
    pub fn parse(s: &str) -> Result<Quantity> {
        let t = s.trim().to_ascii_lowercase();
        Ok(match t.as_str() {
            "displacement" | "disp" | "x" | "rotation" | "angle" => Quantity::Displacement,
            "velocity" | "vel" | "v" | "angular-velocity" => Quantity::Velocity,
            "acceleration" | "acc" | "accel" | "a" | "angular-acceleration" => {
                Quantity::Acceleration
            }
            "force" | "f" | "moment" => Quantity::Force,
            "pressure" | "p" => Quantity::Pressure,
            "volume-velocity" | "q" => Quantity::VolumeVelocity,
            "dimensionless" | "1" | "ratio" => Quantity::Dimensionless,
            _ => {
                return Err(Error::quantity(format!(
                    "unknown quantity '{}'; expected displacement, velocity, acceleration, force, pressure, volume-velocity or dimensionless",
                    crate::error::quote(s)
                )))
            }
        })
    }
    /// Guess the quantity a unit measures on a translational DOF.
    pub fn from_dim(dim: Dim) -> Option<(Quantity, bool)> {
        for q in Quantity::ALL {
            for rot in [false, true] {
                if q.dim(rot) == dim {
                    return Some((q, rot));
                }
            }
        }
        None
    }
}

impl fmt::Display for Quantity {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.write_str(self.name())
    }
}

/// Parse `text` and check it measures `q` (on a rotational DOF if `rotational`);
/// returns the factor to SI.
pub fn factor_for(text: &str, q: Quantity, rotational: bool) -> Result<f64> {
    let u = parse_unit(text)?;
    let want = q.dim(rotational);
    if u.dim == want {
        return Ok(u.factor);
    }
    Err(Error::unit(format!(
        "unit '{}' does not measure {}{}; expected a unit of dimension {} such as {}",
        crate::error::quote(text),
        if rotational { "rotational " } else { "" },
        q,
        dim_text(want),
        q.si_unit(rotational)
    )))
}

/// Factor to SI for an FRF ratio unit such as "mm/s/N", "g/N" or "N/mm",
/// checked against output and input quantities.
pub fn ratio_factor(
    text: &str,
    out: Quantity,
    out_rot: bool,
    inp: Quantity,
    in_rot: bool,
) -> Result<f64> {
    let u = parse_unit(text)?;
    let want = out.dim(out_rot).times(inp.dim(in_rot).inv());
    if u.dim == want {
        return Ok(u.factor);
    }
    Err(Error::unit(format!(
        "unit '{}' does not fit {} per {}; expected dimension {} (SI: {}/{})",
        crate::error::quote(text),
        out,
        inp,
        dim_text(want),
        out.si_unit(out_rot),
        inp.si_unit(in_rot)
    )))
}

/// Human-readable dimension, e.g. "m kg s^-2".
pub fn dim_text(d: Dim) -> String {
    let mut parts = Vec::new();
    for (n, e) in [
        ("m", d.length),
        ("kg", d.mass),
        ("s", d.time),
        ("rad", d.angle),
    ] {
        match e {
            0 => {}
            1 => parts.push(n.to_string()),
            _ => parts.push(format!("{n}^{e}")),
        }
    }
    if parts.is_empty() {
        "1".into()
    } else {
        parts.join(" ")
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn f(s: &str) -> f64 {
        parse_unit(s).unwrap().factor
    }

    #[test]
    fn gravity_and_imperial_definitions() {
        // ISO 80000-3: g_n = 9.80665 m/s^2
        assert_eq!(f("g"), 9.80665);
        // 1959 international yard and pound: 1 in = 0.0254 m, 1 lbf = 4.4482216152605 N
        assert_eq!(f("in"), 0.0254);
        assert_eq!(f("lbf"), 4.4482216152605);
        assert_eq!(parse_unit("g").unwrap().dim, Dim::new(1, 0, -2, 0));
    }

    #[test]
    fn prefixes_and_compounds() {
        assert!((f("mm/s") - 1e-3).abs() < 1e-18);
        assert!((f("N/mm") - 1e3).abs() < 1e-9);
        assert!((f("um") - 1e-6).abs() < 1e-21);
        assert!((f("µm") - 1e-6).abs() < 1e-21);
        assert!((f("kN/m") - 1e3).abs() < 1e-9);
        assert_eq!(parse_unit("m/s^2").unwrap().dim, Dim::new(1, 0, -2, 0));
        assert_eq!(parse_unit("m/s2").unwrap().dim, Dim::new(1, 0, -2, 0));
        assert_eq!(parse_unit("m s^-2").unwrap().dim, Dim::new(1, 0, -2, 0));
        assert_eq!(parse_unit("(m/s)/N").unwrap().dim, Dim::new(0, -1, 1, 0));
        assert_eq!(parse_unit("m/s/N").unwrap().dim, Dim::new(0, -1, 1, 0));
        assert_eq!(parse_unit("N*m").unwrap().dim, Dim::new(2, 1, -2, 0));
        assert!((f("deg") - std::f64::consts::PI / 180.0).abs() < 1e-18);
        assert!((f("in/s") - 0.0254).abs() < 1e-18);
        assert!((f("g/lbf") - 9.80665 / 4.4482216152605).abs() < 1e-15);
        assert!((f("mPa") - 1e-3).abs() < 1e-18);
        assert!((f("Pa/N") - 1.0).abs() < 1e-18);
    }

    #[test]
    fn labels_as_measurement_programs_write_them() {
        // g_n = 9.80665 m/s² (ISO 80000-3); lbf = 4.4482216152605 N (1959)
        let acc_per_n = Dim::new(0, -1, 0, 0);
        for (label, want) in [
            ("(1/N)*(m/s²)", 1.0),
            ("(m/s^2)/N", 1.0),
            ("m/s2/N", 1.0),
            ("m/s²/N", 1.0),
            ("g/lbf", 9.80665 / 4.4482216152605),
            ("g/N", 9.80665),
            ("(1/N)*(g)", 9.80665),
        ] {
            let u = parse_unit(label).unwrap();
            assert_eq!(u.dim, acc_per_n, "{label}");
            assert!((u.factor - want).abs() <= 1e-15 * want, "{label}");
        }
        let u = parse_unit("mm/s/N").unwrap();
        assert_eq!(u.dim, Dim::new(0, -1, 1, 0));
        assert!((u.factor - 1e-3).abs() < 1e-18);
        // squares and densities
        let psd = Dim::new(2, 0, -3, 0);
        for (label, want) in [
            ("g²/Hz", 9.80665f64.powi(2)),
            ("g^2/Hz", 9.80665f64.powi(2)),
            ("(m/s^2)^2/Hz", 1.0),
            ("(m/s²)²/Hz", 1.0),
        ] {
            let u = parse_unit(label).unwrap();
            assert_eq!(u.dim, psd, "{label}");
            assert!((u.factor - want).abs() <= 1e-14 * want, "{label}");
        }
        assert_eq!(parse_unit("Pa^2/Hz").unwrap().dim, Dim::new(-2, 2, -3, 0));
        let esd = parse_unit("g^2 s").unwrap();
        assert_eq!(esd.dim, Dim::new(2, 0, -3, 0));
        assert!((esd.factor - 9.80665f64.powi(2)).abs() < 1e-12);
        // micro: the micro sign, the Greek mu and u
        for l in ["µm/s", "μm/s", "um/s"] {
            assert!((f(l) - 1e-6).abs() < 1e-21, "{l}");
        }
        assert_eq!(parse_unit("m³/s").unwrap().dim, Dim::new(3, 0, -1, 0));
    }

    #[test]
    fn square_roots_only_in_squared_units() {
        let e = parse_unit("m/s/√Hz").unwrap_err();
        assert!(e.message.contains("half power"), "{}", e.message);
        for l in ["m/s/√Hz", "m/s/sqrt(Hz)", "(m/s)/√(Hz)"] {
            // (m/s)²/Hz = m² s⁻¹
            let u = parse_unit_squared(l).unwrap();
            assert_eq!(u.dim, Dim::new(2, 0, -1, 0), "{l}");
            assert_eq!(u.factor, 1.0, "{l}");
        }
        let u = parse_unit_squared("g/√Hz").unwrap();
        assert_eq!(u.dim, Dim::new(2, 0, -3, 0));
        assert!((u.factor - 9.80665f64.powi(2)).abs() < 1e-12);
        // √(Hz²) is Hz; a root of a half power is refused
        assert_eq!(parse_unit("√(Hz^2)").unwrap().dim, Dim::new(0, 0, -1, 0));
        assert!(parse_unit_squared("√(√Hz)").is_err());
        assert!(parse_unit_squared("√").is_err());
        assert!(parse_unit("m^100").is_err());
    }

    #[test]
    fn unknown_units_are_errors() {
        for bad in ["furlong", "m/", "mm//s", "(m/s", "m/s)", "xN", "m^", "m^-"] {
            let e = parse_unit(bad).unwrap_err();
            assert!(e.message.contains(bad.trim()), "{bad}: {}", e.message);
        }
    }

    #[test]
    fn quantity_checks() {
        assert!((factor_for("mm/s", Quantity::Velocity, false).unwrap() - 1e-3).abs() < 1e-18);
        let e = factor_for("mm", Quantity::Velocity, false).unwrap_err();
        assert!(
            e.message.contains("does not measure velocity"),
            "{}",
            e.message
        );
        assert_eq!(
            factor_for("deg", Quantity::Displacement, true).unwrap(),
            std::f64::consts::PI / 180.0
        );
        let r = ratio_factor("g/N", Quantity::Acceleration, false, Quantity::Force, false).unwrap();
        assert_eq!(r, 9.80665);
        assert!(
            ratio_factor("m/N", Quantity::Acceleration, false, Quantity::Force, false).is_err()
        );
    }
}
