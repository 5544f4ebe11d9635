//! The demo scenario's physics: a heat-pump outdoor unit hung on a
//! timber-frame house wall by two steel wall brackets through four elastomer
//! isolators, with a microphone at the bed in the bedroom behind the wall.
//!
//! **Everything here is invented** for demonstration; no value describes a
//! real product, building or measurement. The models are deterministic, so
//! tests can regenerate every file of the demo.
//!
//! ## Axes and names
//! * X is the wall normal, positive outwards (away from the bedroom), Y runs
//!   along the wall, Z is up.
//! * Isolator seats `s1` … `s4`: `s1`, `s2` on bracket A (rear, front), `s3`,
//!   `s4` on bracket B (rear, front). The casing, the isolators' upper ends
//!   and the brackets' arms meet there; the seat DOFs are vertical (`+Z`).
//! * Wall anchors `a1` … `a4`: `a1` (top), `a2` (bottom) of bracket A, `a3`
//!   (top), `a4` (bottom) of bracket B; the anchor DOFs are normal to the
//!   wall (`+X`).
//! * Component namespaces: `casing`, `isolator`, `bracket`, `wall`, `room`.
//!
//! ## Grid
//! [`grid`] gives 10 Hz to 1 kHz in 1 Hz steps (991 lines), so every
//! harmonic of the 58 Hz compressor speed falls on a line. [`scenario`]
//! accepts any grid above 0 Hz (the free casing and the brackets have
//! rigid-body modes, infinite at 0 Hz).
//!
//! A prediction made with these data is an illustration of the method, not
//! an assessment of any installation: noise limits and their assessment
//! follow local regulations and the practice of a qualified acoustician.

use crate::error::{Error, Result};
use crate::frf::{Direction, Dof, FrfSet, Provenance, SignalKind};
use crate::synth::{
    Frame, FrameMember, FrameNode, Isolator, ModalModel, Mode, Residual, StiffnessPoint, Support,
};
use crate::units::Quantity;
use num_complex::Complex64;
use std::f64::consts::PI;

/// The compressor's running speed (Hz).
pub const RUNNING_HZ: f64 = 58.0;
/// Stiffness factor of the softer isolator variant.
pub const SOFT_FACTOR: f64 = 0.5;

/// The parts of the demo scenario, SI units, all on the grid given to
/// [`scenario`].
#[derive(Debug, Clone, PartialEq)]
pub struct DemoParts {
    /// Receptance (m/N) of the free casing at the seats `casing:s1+Z` …
    /// `casing:s4+Z`, 4 × 4 complete.
    pub casing: FrfSet,
    /// Blocked forces (N, peak, with phase) at `casing:s1+Z` … `casing:s4+Z`:
    /// a spectrum set (one input `ref`), non-zero only on the lines of the
    /// harmonics of 58 Hz up to 1 kHz.
    pub blocked_forces: FrfSet,
    /// Axial dynamic stiffness (N/m) of one isolator, 1 × 1 `isolator:1+Z`.
    pub isolator_axial: FrfSet,
    /// Shear dynamic stiffness (N/m) of one isolator, 1 × 1 `isolator:1+X`.
    pub isolator_shear: FrfSet,
    /// The softer variant's axial stiffness ([`SOFT_FACTOR`] × axial).
    pub isolator_axial_soft: FrfSet,
    /// The softer variant's shear stiffness ([`SOFT_FACTOR`] × shear).
    pub isolator_shear_soft: FrfSet,
    /// Receptance (m/N) of the two brackets between `bracket:s1+Z` …
    /// `bracket:s4+Z` and `bracket:a1+X` … `bracket:a4+X`, 8 × 8 complete
    /// (entries between the two brackets are zero).
    pub bracket: FrfSet,
    /// Receptance (m/N) of the wall at `wall:a1+X` … `wall:a4+X`, 4 × 4.
    pub wall: FrfSet,
    /// Vibro-acoustic transfer (Pa/N) from forces at `wall:a1+X` …
    /// `wall:a4+X` to the sound pressure at `room:bed`, 1 × 4.
    pub vibro: FrfSet,
}

impl DemoParts {
    /// Every part with a short name (the set's own name), in a fixed order.
    pub fn all(&self) -> Vec<(&'static str, &FrfSet)> {
        vec![
            ("casing", &self.casing),
            ("blocked_forces", &self.blocked_forces),
            ("isolator_axial", &self.isolator_axial),
            ("isolator_shear", &self.isolator_shear),
            ("isolator_axial_soft", &self.isolator_axial_soft),
            ("isolator_shear_soft", &self.isolator_shear_soft),
            ("bracket", &self.bracket),
            ("wall", &self.wall),
            ("vibro", &self.vibro),
        ]
    }
}

/// The demo grid: 10 Hz to 1 kHz in 1 Hz steps.
pub fn grid() -> Vec<f64> {
    (10..=1000).map(|f| f as f64).collect()
}

fn provenance(options: &str) -> Vec<Provenance> {
    vec![Provenance {
        file: String::new(),
        sha256: String::new(),
        format: "mortise-demo".into(),
        options: options.to_string(),
    }]
}

/// Build every part of the demo on `freqs` (Hz, strictly increasing, above
/// 0 Hz, within 10 Hz … 1 kHz for the isolator tables).
pub fn scenario(freqs: &[f64]) -> Result<DemoParts> {
    crate::grid::check_grid(freqs)?;
    if freqs[0] <= 0.0 {
        return Err(Error::grid(
            "the demo's casing and brackets move as rigid bodies at 0 Hz; expected a grid above 0 Hz",
        ));
    }
    let iso_a = isolator_axial();
    let iso_s = isolator_shear();
    let mut parts = DemoParts {
        casing: casing_model().receptance(freqs)?,
        blocked_forces: blocked_forces(freqs)?,
        isolator_axial: iso_a.stiffness(freqs)?,
        isolator_shear: iso_s.stiffness(freqs)?,
        isolator_axial_soft: iso_a
            .scaled("isolator_axial_soft", SOFT_FACTOR)?
            .stiffness(freqs)?,
        isolator_shear_soft: iso_s
            .scaled("isolator_shear_soft", SOFT_FACTOR)?
            .stiffness(freqs)?,
        bracket: brackets(freqs)?,
        wall: wall_model().receptance(freqs)?,
        vibro: vibro(freqs)?,
    };
    parts.casing.provenance = provenance(
        "modal model of the casing: 3 rigid-body and 9 flexible modes, seat residual stiffness",
    );
    parts.blocked_forces.provenance = provenance("compressor at 58 Hz, harmonics 1 to 17");
    parts.isolator_axial.provenance = provenance("elastomer isolator, axial");
    parts.isolator_shear.provenance = provenance("elastomer isolator, shear");
    parts.isolator_axial_soft.provenance = provenance("softer elastomer isolator, axial");
    parts.isolator_shear_soft.provenance = provenance("softer elastomer isolator, shear");
    parts.bracket.provenance = provenance("planar frame FE of two triangular steel brackets");
    parts.wall.provenance = provenance("orthotropic timber-frame panel, simply supported, modal");
    parts.vibro.provenance = provenance("panel modes coupled to the room's rigid-wall modes");
    Ok(parts)
}

// ---------------------------------------------------------------- casing

/// Seat positions (x, y) in m, unit frame: x from the wall, y along it.
const SEATS: [(f64, f64); 4] = [(0.15, -0.30), (0.45, -0.30), (0.15, 0.30), (0.45, 0.30)];

/// The casing as a modal model at the four seats.
///
/// * 90 kg unit, centre of mass at x = 0.29 m, y = +0.04 m (compressor
///   side); roll inertia about X 10.5 kg·m², pitch inertia about Y 5.5 kg·m².
///   Heave, pitch and roll are rigid-body modes (0 Hz) seen at the seats.
/// * Nine flexible modes of the base frame, compressor on its grommets,
///   fan motor bracket and panels from 38 Hz to 1.25 kHz, modal masses 3 to
///   30 kg, damping ratio 3 %.
/// * A residual stiffness of 2·10⁷ N/m at each seat stands for the local
///   flexibility of the sheet-metal seat and the modes above the band.
pub fn casing_model() -> ModalModel {
    let m = 90.0;
    let (xc, yc) = (0.29, 0.04);
    let (ixx, iyy): (f64, f64) = (10.5, 5.5);
    let dofs: Vec<Dof> = (1..=4)
        .map(|i| Dof::new("casing", &format!("s{i}"), Direction::Z))
        .collect();
    let rigid = |shape: Vec<f64>| Mode {
        freq: 0.0,
        zeta: 0.0,
        eta: 0.0,
        modal_mass: 1.0,
        shape,
    };
    let mut modes = vec![
        rigid(vec![1.0 / f64::sqrt(m); 4]),
        // pitch about Y: a rotation θ_y lowers points at larger x (δz = −(x − x_c) θ_y)
        rigid(SEATS.iter().map(|s| -(s.0 - xc) / iyy.sqrt()).collect()),
        // roll about X: δz = (y − y_c) θ_x
        rigid(SEATS.iter().map(|s| (s.1 - yc) / ixx.sqrt()).collect()),
    ];
    // (frequency Hz, modal mass kg, shape at s1..s4)
    let flex: [(f64, f64, [f64; 4]); 9] = [
        (38.0, 30.0, [-0.35, -0.30, -0.45, -0.40]), // compressor bounce on its grommets
        (72.0, 8.0, [1.0, -1.0, -1.0, 1.0]),        // base frame twist
        (115.0, 12.0, [0.3, 0.6, -0.2, 0.5]),       // fan motor bracket
        (180.0, 10.0, [-0.5, -0.4, -0.5, -0.45]),   // base pan bending along Y
        (262.0, 6.0, [1.0, -0.9, 1.0, -0.8]),       // base pan bending along X
        (410.0, 5.0, [0.6, -0.4, -0.7, 0.5]),
        (640.0, 4.0, [1.0, 0.2, -0.9, -0.3]),
        (890.0, 3.0, [-0.3, 0.9, 0.5, -1.0]),
        (1250.0, 3.0, [0.5, 0.5, -0.5, -0.5]),
    ];
    for (f, mm, s) in flex {
        modes.push(Mode {
            freq: f,
            zeta: 0.03,
            eta: 0.0,
            modal_mass: mm,
            shape: s.to_vec(),
        });
    }
    let residuals = dofs
        .iter()
        .map(|d| Residual {
            output: d.clone(),
            input: d.clone(),
            stiffness: Some(2.0e7),
            mass: None,
        })
        .collect();
    ModalModel {
        name: "casing".into(),
        dofs,
        modes,
        residuals,
        complex_modes: Vec::new(),
    }
}

// ------------------------------------------------------ blocked forces

/// A deterministic number in [0, 1) from two integers (splitmix64).
fn unit_random(a: u64, b: u64) -> f64 {
    let mut z = a.wrapping_mul(0x9E37_79B9_7F4A_7C15) ^ b.wrapping_add(0x632B_E59B_D9B4_E019);
    z = (z ^ (z >> 30)).wrapping_mul(0xBF58_476D_1CE4_E5B9);
    z = (z ^ (z >> 27)).wrapping_mul(0x94D0_49BB_1331_11EB);
    z ^= z >> 31;
    (z >> 11) as f64 / (1u64 << 53) as f64
}

/// Blocked forces of the running unit at the seats (N, peak).
///
/// Harmonic n of 58 Hz (n = 1 … 17, up to 986 Hz) has the amplitude
/// 4 N · n^−0.9 (the 2nd harmonic ×1.3, the 6th ×1.8), shared among the
/// seats by their distance from the compressor (at x = 0.30 m, y = +0.20 m)
/// and given a phase that turns with the seat's angle around the compressor
/// (a rocking pattern) plus a deterministic scatter. Each harmonic sits on
/// the grid line nearest to n·58 Hz when that line is within half a line
/// spacing; all other lines are zero.
pub fn blocked_forces(freqs: &[f64]) -> Result<FrfSet> {
    crate::grid::check_grid(freqs)?;
    let outs: Vec<Dof> = (1..=4)
        .map(|i| Dof::new("casing", &format!("s{i}"), Direction::Z))
        .collect();
    let mut s = FrfSet::zeros(
        "blocked_forces",
        freqs.to_vec(),
        outs,
        vec![Dof::scalar("", "ref")],
        Quantity::Force,
        Quantity::Dimensionless,
    );
    s.signal = Some(SignalKind::Peak);
    let comp = (0.30, 0.20);
    for n in 1..=17u64 {
        let f = RUNNING_HZ * n as f64;
        let l = match nearest_line(freqs, f) {
            Some(l) => l,
            None => continue,
        };
        let mut amp = 4.0 * (n as f64).powf(-0.9);
        if n == 2 {
            amp *= 1.3;
        }
        if n == 6 {
            amp *= 1.8;
        }
        let phase0 = 2.0 * PI * unit_random(n, 99);
        for (i, seat) in SEATS.iter().enumerate() {
            let (dx, dy) = (seat.0 - comp.0, seat.1 - comp.1);
            let dist = (dx * dx + dy * dy).sqrt();
            let share = 0.5 / (0.2 + dist) * (0.85 + 0.3 * unit_random(n, i as u64));
            let ang = dy.atan2(dx);
            let ph = phase0 + ang + 0.6 * (unit_random(n, 10 + i as u64) - 0.5);
            s.set(l, i, 0, Complex64::from_polar(amp * share, ph));
        }
    }
    Ok(s)
}

fn nearest_line(freqs: &[f64], f: f64) -> Option<usize> {
    let p = freqs.partition_point(|&x| x < f);
    let cand = [p.checked_sub(1), (p < freqs.len()).then_some(p)];
    let l = cand
        .iter()
        .flatten()
        .copied()
        .min_by(|&a, &b| (freqs[a] - f).abs().total_cmp(&(freqs[b] - f).abs()))?;
    let spacing = if freqs.len() < 2 {
        return ((freqs[l] - f).abs() < 1e-9).then_some(l);
    } else if l + 1 < freqs.len() {
        freqs[l + 1] - freqs[l]
    } else {
        freqs[l] - freqs[l - 1]
    };
    ((freqs[l] - f).abs() <= 0.5 * spacing).then_some(l)
}

// ------------------------------------------------------------ isolators

/// One elastomer isolator, axial: 145 N/mm at 10 Hz rising to 190 N/mm at
/// 1 kHz (dynamic stiffening of the rubber), loss factor 0.09 to 0.14.
pub fn isolator_axial() -> Isolator {
    Isolator {
        name: "isolator_axial".into(),
        dof: Dof::new("isolator", "1", Direction::Z),
        table: vec![
            StiffnessPoint {
                freq: 10.0,
                k: 1.45e5,
                eta: 0.09,
            },
            StiffnessPoint {
                freq: 100.0,
                k: 1.60e5,
                eta: 0.11,
            },
            StiffnessPoint {
                freq: 1000.0,
                k: 1.90e5,
                eta: 0.14,
            },
        ],
    }
}

/// One elastomer isolator, shear: about a third of the axial stiffness,
/// 48 to 66 N/mm, loss factor 0.10 to 0.15.
pub fn isolator_shear() -> Isolator {
    Isolator {
        name: "isolator_shear".into(),
        dof: Dof::new("isolator", "1", Direction::X),
        table: vec![
            StiffnessPoint {
                freq: 10.0,
                k: 4.8e4,
                eta: 0.10,
            },
            StiffnessPoint {
                freq: 100.0,
                k: 5.4e4,
                eta: 0.12,
            },
            StiffnessPoint {
                freq: 1000.0,
                k: 6.6e4,
                eta: 0.15,
            },
        ],
    }
}

// -------------------------------------------------------------- brackets

/// One triangular steel wall bracket as a planar frame in the X–Z plane,
/// node names carrying the bracket's seats and anchors.
///
/// * Upright on the wall (x = 0) from the bottom anchor (z = 0) to the top
///   anchor (z = 0.40 m), 50 × 50 × 5 angle (A = 4.8 cm², I = 11 cm⁴).
/// * Arm at z = 0.40 m out to x = 0.55 m, 40 × 40 × 4 hollow section
///   (A = 5.76 cm², I = 12.6 cm⁴), seats at x = 0.15 m (rear) and 0.45 m
///   (front).
/// * Brace from the bottom anchor to the arm at x = 0.40 m, 30 × 30 × 3
///   hollow section (A = 3.24 cm², I = 3.99 cm⁴).
/// * Steel E = 210 GPa, ρ = 7850 kg/m³, loss factor 0.01 (bolted joints).
/// * The anchors are held vertically (Z) by the wall's in-plane stiffness and
///   are free normal to the wall (X) and in rotation (RY): that is where the
///   wall's own mobility takes over.
pub fn bracket_frame(rear: &str, front: &str, top: &str, bottom: &str) -> Frame {
    let n = |name: &str, x: f64, z: f64| FrameNode {
        name: name.to_string(),
        x,
        z,
    };
    let mem = |a: &str, b: &str, el: usize, area: f64, i: f64| FrameMember {
        a: a.to_string(),
        b: b.to_string(),
        elements: el,
        young: 2.1e11,
        second_moment: i,
        density: 7850.0,
        area,
    };
    let (arm_a, arm_i) = (5.76e-4, 1.26e-7);
    Frame {
        component: "bracket".into(),
        nodes: vec![
            n(bottom, 0.0, 0.0),
            n(top, 0.0, 0.40),
            n(rear, 0.15, 0.40),
            n("brace", 0.40, 0.40),
            n(front, 0.45, 0.40),
            n("tip", 0.55, 0.40),
        ],
        members: vec![
            mem(bottom, top, 4, 4.8e-4, 1.1e-7),
            mem(top, rear, 3, arm_a, arm_i),
            mem(rear, "brace", 5, arm_a, arm_i),
            mem("brace", front, 1, arm_a, arm_i),
            mem(front, "tip", 2, arm_a, arm_i),
            mem(bottom, "brace", 8, 3.24e-4, 3.99e-8),
        ],
        supports: vec![
            Support {
                node: bottom.to_string(),
                fixed: vec![Direction::Z],
            },
            Support {
                node: top.to_string(),
                fixed: vec![Direction::Z],
            },
        ],
        loss_factor: 0.01,
        rayleigh: None,
    }
}

/// Both brackets' receptances in one 8 × 8 set (seats Z, then anchors X).
pub fn brackets(freqs: &[f64]) -> Result<FrfSet> {
    let specs = [("s1", "s2", "a1", "a2"), ("s3", "s4", "a3", "a4")];
    let mut parts = Vec::new();
    for (r, f, t, b) in specs {
        let fr = bracket_frame(r, f, t, b);
        let dofs = vec![
            Dof::new("bracket", r, Direction::Z),
            Dof::new("bracket", f, Direction::Z),
            Dof::new("bracket", t, Direction::X),
            Dof::new("bracket", b, Direction::X),
        ];
        parts.push(fr.receptance(freqs, &dofs, &dofs)?);
    }
    // order: s1 s2 s3 s4 (Z), a1 a2 a3 a4 (X)
    let order: [(usize, usize); 8] = [
        (0, 0),
        (0, 1),
        (1, 0),
        (1, 1),
        (0, 2),
        (0, 3),
        (1, 2),
        (1, 3),
    ];
    let dofs: Vec<Dof> = order
        .iter()
        .map(|&(p, i)| parts[p].outputs[i].clone())
        .collect();
    let mut s = FrfSet::zeros(
        "bracket",
        freqs.to_vec(),
        dofs.clone(),
        dofs,
        Quantity::Displacement,
        Quantity::Force,
    );
    for l in 0..freqs.len() {
        for (a, &(pa, ia)) in order.iter().enumerate() {
            for (b, &(pb, ib)) in order.iter().enumerate() {
                if pa == pb {
                    s.set(l, a, b, parts[pa].get(l, ia, ib));
                }
            }
        }
    }
    Ok(s)
}

// ------------------------------------------------------------------ wall

/// The wall panel: timber frame, 3.0 m wide (Y) × 2.6 m high (Z), taken as a
/// simply supported orthotropic plate with smeared studs.
struct Panel {
    a: f64,
    b: f64,
    /// bending stiffness across the studs (N·m)
    dy: f64,
    /// along the studs (N·m)
    dz: f64,
    /// effective torsional stiffness H (N·m)
    h: f64,
    /// mass per area (kg/m²)
    mass: f64,
    zeta: f64,
    fmax: f64,
}

const PANEL: Panel = Panel {
    a: 3.0,
    b: 2.6,
    dy: 1.2e3,
    dz: 2.0e5,
    h: 3.9e3,
    mass: 35.0,
    zeta: 0.03,
    fmax: 3000.0,
};

/// Anchor positions on the wall (y, z) in m, from the room's corner.
const ANCHORS: [(f64, f64); 4] = [(1.2, 1.3), (1.2, 0.9), (1.8, 1.3), (1.8, 0.9)];

impl Panel {
    /// (m, n, f_mn Hz) for every mode below fmax.
    fn modes(&self) -> Vec<(usize, usize, f64)> {
        let mut v = Vec::new();
        for m in 1..200 {
            let mut any = false;
            for n in 1..200 {
                let (p, q) = (m as f64 / self.a, n as f64 / self.b);
                let d = self.dy * p.powi(4) + 2.0 * self.h * p * p * q * q + self.dz * q.powi(4);
                let f = PI / 2.0 * (d / self.mass).sqrt();
                if f > self.fmax {
                    break;
                }
                any = true;
                v.push((m, n, f));
            }
            if !any {
                break;
            }
        }
        v
    }
    fn shape(&self, m: usize, n: usize, y: f64, z: f64) -> f64 {
        (m as f64 * PI * y / self.a).sin() * (n as f64 * PI * z / self.b).sin()
    }
    fn modal_mass(&self) -> f64 {
        self.mass * self.a * self.b / 4.0
    }
}

/// The wall's modal model at the anchors.
///
/// Timber-frame wall, 45 × 145 mm studs at 600 mm (vertical) with sheathing
/// and linings: smeared bending stiffness 2·10⁵ N·m along the studs and
/// 1.2·10³ N·m across them, torsional 3.9·10³ N·m, 35 kg/m², damping ratio
/// 3 %, simply supported edges, every mode below 3 kHz (first mode near
/// 18 Hz). Anchors at y = 1.2 m and 1.8 m (on studs), z = 1.3 m (top) and
/// 0.9 m (bottom).
pub fn wall_model() -> ModalModel {
    let p = &PANEL;
    let dofs: Vec<Dof> = (1..=4)
        .map(|i| Dof::new("wall", &format!("a{i}"), Direction::X))
        .collect();
    let modes = p
        .modes()
        .into_iter()
        .map(|(m, n, f)| Mode {
            freq: f,
            zeta: p.zeta,
            eta: 0.0,
            modal_mass: p.modal_mass(),
            shape: ANCHORS.iter().map(|&(y, z)| p.shape(m, n, y, z)).collect(),
        })
        .collect();
    ModalModel {
        name: "wall".into(),
        dofs,
        modes,
        residuals: Vec::new(),
        complex_modes: Vec::new(),
    }
}

// ----------------------------------------------------------------- room

/// ∫₀ᴸ sin(mπs/L) cos(pπs/L) ds.
fn sin_cos_integral(m: usize, p: usize, l: f64) -> f64 {
    if m == p || (m + p) % 2 == 0 {
        return 0.0;
    }
    let (mf, pf) = (m as f64, p as f64);
    l / PI * 2.0 * mf / (mf * mf - pf * pf)
}

/// Vibro-acoustic transfer from anchor forces to the pressure at the bed.
///
/// The wall panel's modes (as in [`wall_model`]) drive the bedroom, a
/// rigid-walled box 3.8 m deep (X) × 3.0 m (Y) × 2.6 m (Z) whose whole wall
/// x = 0 is the panel; room modes up to 1.4 kHz, each decaying with the
/// reverberation time 0.5 s of a furnished bedroom. The surface velocity
/// into the room, projected on each room mode, is its source strength:
/// p(r) = iωρc² Σ_N ψ_N(r) Q_N / (V Λ_N (ω_N² − ω² + 2iδω)), with
/// ρ = 1.2 kg/m³, c = 343 m/s, δ = 6.91/T. Microphone at x = 2.6 m,
/// y = 0.9 m, z = 0.7 m (head of the bed).
pub fn vibro(freqs: &[f64]) -> Result<FrfSet> {
    crate::grid::check_grid(freqs)?;
    let p = &PANEL;
    let (lx, ly, lz) = (3.8, p.a, p.b);
    let (rho, c) = (1.2, 343.0);
    let t60 = 0.5;
    let delta = 6.91 / t60;
    let mic = (2.6, 0.9, 0.7);
    let fmax_room = 1400.0;
    let vol = lx * ly * lz;
    let pmodes = p.modes();
    let mmax = pmodes.iter().map(|x| x.0).max().unwrap_or(1);
    let nmax = pmodes.iter().map(|x| x.1).max().unwrap_or(1);
    let kmax = 2.0 * fmax_room / c;
    let (nxm, nym, nzm) = (
        (kmax * lx) as usize,
        (kmax * ly) as usize,
        (kmax * lz) as usize,
    );
    // coupling integrals
    let iy: Vec<Vec<f64>> = (0..=mmax)
        .map(|m| (0..=nym).map(|q| sin_cos_integral(m, q, ly)).collect())
        .collect();
    let iz: Vec<Vec<f64>> = (0..=nmax)
        .map(|n| (0..=nzm).map(|q| sin_cos_integral(n, q, lz)).collect())
        .collect();
    // room modes: (ny, nz) → list of (ω_N, ψ_N(mic) / (V Λ_N))
    let mut room: Vec<(usize, usize, f64, f64)> = Vec::new();
    for nx in 0..=nxm {
        for ny in 0..=nym {
            for nz in 0..=nzm {
                let k2 =
                    (nx as f64 / lx).powi(2) + (ny as f64 / ly).powi(2) + (nz as f64 / lz).powi(2);
                let f = c / 2.0 * k2.sqrt();
                if f > fmax_room {
                    continue;
                }
                let eps = |i: usize| if i == 0 { 1.0 } else { 0.5 };
                let lam = eps(nx) * eps(ny) * eps(nz);
                let psi = (nx as f64 * PI * mic.0 / lx).cos()
                    * (ny as f64 * PI * mic.1 / ly).cos()
                    * (nz as f64 * PI * mic.2 / lz).cos();
                room.push((ny, nz, 2.0 * PI * f, psi / (vol * lam)));
            }
        }
    }
    let inputs: Vec<Dof> = (1..=4)
        .map(|i| Dof::new("wall", &format!("a{i}"), Direction::X))
        .collect();
    let mut s = FrfSet::zeros(
        "vibro",
        freqs.to_vec(),
        vec![Dof::scalar("room", "bed")],
        inputs,
        Quantity::Pressure,
        Quantity::Force,
    );
    let mm = p.modal_mass();
    // Per line: R(ny, nz) = Σ_nx ψ_N(mic)/(VΛ_N (ω_N² − ω² + 2iδω)), then
    // W(m, n) = Σ_ny,nz I_y(m, ny) I_z(n, nz) R(ny, nz), so that the pressure
    // per anchor force is iωρc² Σ_mn q_mn W(m, n), q_mn the modal velocity
    // into the room.
    let zero = Complex64::new(0.0, 0.0);
    let shapes: Vec<[f64; 4]> = pmodes
        .iter()
        .map(|&(m, n, _)| {
            let mut v = [0.0; 4];
            for (j, &(ya, za)) in ANCHORS.iter().enumerate() {
                v[j] = p.shape(m, n, ya, za);
            }
            v
        })
        .collect();
    let mut r = vec![vec![zero; nzm + 1]; nym + 1];
    let mut u = vec![vec![zero; nmax + 1]; nym + 1];
    let mut wmn = vec![vec![zero; nmax + 1]; mmax + 1];
    for (l, &f) in freqs.iter().enumerate() {
        let w = 2.0 * PI * f;
        let iw = Complex64::new(0.0, w);
        r.iter_mut()
            .for_each(|row| row.iter_mut().for_each(|v| *v = zero));
        let dim = 2.0 * delta * w;
        for &(ny, nz, wn, g) in &room {
            // g / (re + i·dim) without a general complex division
            let re = wn * wn - w * w;
            let s2 = g / (re * re + dim * dim);
            r[ny][nz] += Complex64::new(re * s2, -dim * s2);
        }
        for ny in 0..=nym {
            for n in 1..=nmax {
                let mut acc = zero;
                for nz in 0..=nzm {
                    if iz[n][nz] != 0.0 {
                        acc += r[ny][nz] * iz[n][nz];
                    }
                }
                u[ny][n] = acc;
            }
        }
        for m in 1..=mmax {
            for n in 1..=nmax {
                let mut acc = zero;
                for ny in 0..=nym {
                    if iy[m][ny] != 0.0 {
                        acc += u[ny][n] * iy[m][ny];
                    }
                }
                wmn[m][n] = acc;
            }
        }
        let mut pr = [zero; 4];
        for (k, &(m, n, fr)) in pmodes.iter().enumerate() {
            let wr = 2.0 * PI * fr;
            let den = mm * Complex64::new(wr * wr - w * w, 2.0 * p.zeta * wr * w);
            // modal velocity into the room (−v_x) per unit anchor force
            let gw = -iw / den * wmn[m][n];
            for j in 0..4 {
                pr[j] += gw * shapes[k][j];
            }
        }
        for (j, v) in pr.iter().enumerate() {
            s.set(l, 0, j, iw * rho * c * c * v);
        }
    }
    Ok(s)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn harmonics_land_on_their_lines() {
        let g = grid();
        assert_eq!(g.len(), 991);
        let b = blocked_forces(&g).unwrap();
        let nonzero: Vec<f64> = (0..b.n_lines())
            .filter(|&l| b.get(l, 0, 0).norm() > 0.0)
            .map(|l| b.freqs[l])
            .collect();
        let want: Vec<f64> = (1..=17).map(|n| 58.0 * n as f64).collect();
        assert_eq!(nonzero, want);
        // a grid that misses the harmonics by more than half a step has no lines
        let off: Vec<f64> = (0..50).map(|i| 100.3 + 0.2 * i as f64).collect();
        let b = blocked_forces(&off).unwrap();
        assert!(b.data.iter().all(|v| v.norm() == 0.0));
    }

    #[test]
    fn panel_first_mode_and_sin_cos_integral() {
        let m = PANEL.modes();
        let f11 = m.iter().find(|x| x.0 == 1 && x.1 == 1).unwrap().2;
        assert!(f11 > 15.0 && f11 < 21.0, "{f11}");
        // ∫₀^L sin(πs/L) ds = 2L/π
        assert!((sin_cos_integral(1, 0, 3.0) - 6.0 / PI).abs() < 1e-12);
        assert_eq!(sin_cos_integral(2, 2, 3.0), 0.0);
    }
}
