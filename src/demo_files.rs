//! The demo scenario's supplier files and recipe, written from the physics
//! of [`crate::demo`] in each invented supplier's own format, units and node
//! naming. Used by `mortise demo` and by the page's "load the demo" button,
//! so both get byte-identical files without shipping them.
//!
//! * `unit-casing.uff` — the unit maker: casing mobility at the isolator seats, UFF 58 ASCII.
//! * `unit-blocked-forces.uff` — the unit maker: compressor blocked forces (peak, N), UFF 58 ASCII.
//! * `isolator-stiffness.csv` — the isolator maker: storage stiffness in N/mm and loss factor, axial and shear.
//! * `brackets.uffb` — the bracket maker: FE receptances seats ↔ wall anchors, UFF 58b binary.
//! * `wall-accelerance.csv` — the acoustician: wall accelerance at the anchors in g/N, magnitude and phase.
//! * `wall-to-bed-pressure.csv` — the acoustician: vibro-acoustic transfer anchors → bed, Pa/N, re/im.
//! * `heat-pump.recipe.json` — the assembly.

use crate::demo::{self, DemoParts};
use crate::error::{Error, Result};
use crate::frf::FrfSet;
use crate::io::uff58;
use crate::units::G_N;
use std::fmt::Write as _;

/// Significant digits the invented suppliers print in their CSV files.
fn num(x: f64) -> String {
    format!("{x:.7e}")
}

fn isolator_csv(p: &DemoParts) -> String {
    let mut s = String::new();
    s.push_str("Elastomer isolator, dynamic stiffness (demo data, invented)\n");
    s.push_str("Preload 230 N; 23 degC; amplitude 0.05 mm\n");
    s.push_str("f [Hz];K' axial [N/mm];eta axial [-];K' shear [N/mm];eta shear [-]\n");
    for k in 0..p.isolator_axial.n_lines() {
        let a = p.isolator_axial.get(k, 0, 0);
        let b = p.isolator_shear.get(k, 0, 0);
        let _ = writeln!(
            s,
            "{};{};{};{};{}",
            p.isolator_axial.freqs[k],
            num(a.re / 1000.0),
            num(a.im / a.re),
            num(b.re / 1000.0),
            num(b.im / b.re)
        );
    }
    s
}

fn wall_csv(p: &DemoParts) -> Result<String> {
    let acc = p.wall.to_kind("accelerance")?;
    let mut s = String::new();
    s.push_str("# timber-frame wall, hammer test at the bracket anchors (demo data, invented)\n");
    s.push_str("# accelerance in g/N, phase in degrees\n");
    let mut head = vec!["freq_Hz".to_string()];
    for o in &acc.outputs {
        for i in &acc.inputs {
            head.push(format!("A_{}_{}_mag", o.node, i.node));
            head.push(format!("A_{}_{}_phase", o.node, i.node));
        }
    }
    s.push_str(&head.join(","));
    s.push('\n');
    for k in 0..acc.n_lines() {
        let mut row = vec![format!("{}", acc.freqs[k])];
        for v in acc.line(k) {
            row.push(num(v.norm() / G_N));
            row.push(format!("{:.4}", v.arg().to_degrees()));
        }
        s.push_str(&row.join(","));
        s.push('\n');
    }
    Ok(s)
}

fn vibro_csv(p: &DemoParts) -> String {
    let v = &p.vibro;
    let mut s = String::new();
    s.push_str(
        "# sound pressure at the bed per force at each anchor, Pa/N (demo data, invented)\n",
    );
    let mut head = vec!["freq_Hz".to_string()];
    for i in &v.inputs {
        head.push(format!("p_bed_{}_re", i.node));
        head.push(format!("p_bed_{}_im", i.node));
    }
    s.push_str(&head.join(","));
    s.push('\n');
    for k in 0..v.n_lines() {
        let mut row = vec![format!("{}", v.freqs[k])];
        for x in v.line(k) {
            row.push(num(x.re));
            row.push(num(x.im));
        }
        s.push_str(&row.join(","));
        s.push('\n');
    }
    s
}

fn dofs(prefix: &str, nodes: &[&str], dir: &str) -> Vec<String> {
    nodes
        .iter()
        .map(|n| format!("{prefix}:{n}+{dir}"))
        .collect()
}

/// The demo recipe.
pub fn recipe_json(p: &DemoParts) -> serde_json::Value {
    use serde_json::json;
    let node = |map: &[(&str, &str)], n: &str| {
        map.iter()
            .find(|(a, _)| *a == n)
            .map(|(_, b)| b.to_string())
            .unwrap_or_default()
    };
    let seats: Vec<String> = ["s1", "s2", "s3", "s4"]
        .iter()
        .map(|s| node(&CASING_NODES, s))
        .collect();
    let anchors = ["a1", "a2", "a3", "a4"];
    let mut joints = Vec::new();
    for s in ["s1", "s2", "s3", "s4"] {
        joints.push(json!({"a": format!("casing:{}+Z", node(&CASING_NODES, s)), "b": format!("bracket:{}+Z", node(&BRACKET_NODES, s)), "type": "measured", "stiffness": "isolator"}));
    }
    for a in anchors {
        joints.push(json!({"a": format!("bracket:{}+X", node(&BRACKET_NODES, a)), "b": format!("wall:{a}+X"), "type": "rigid"}));
    }
    let seats: Vec<&str> = seats.iter().map(String::as_str).collect();
    let wall_entries: Vec<_> = p
        .wall
        .outputs
        .iter()
        .flat_map(|o| {
            p.wall.inputs.iter().map(move |i| {
                json!({
                    "out_dof": format!("{}+X", o.node),
                    "in_dof": format!("{}+X", i.node),
                    "values": {"form": "mag-phase", "mag": format!("A_{}_{}_mag", o.node, i.node), "phase": format!("A_{}_{}_phase", o.node, i.node)}
                })
            })
        })
        .collect();
    let vibro_entries: Vec<_> = p
        .vibro
        .inputs
        .iter()
        .map(|i| {
            json!({
                "out_dof": "room:bed",
                "in_dof": format!("wall:{}+X", i.node),
                "values": {"form": "re-im", "re": format!("p_bed_{}_re", i.node), "im": format!("p_bed_{}_im", i.node)}
            })
        })
        .collect();
    // the compressor's blocked forces per order (the harmonics of the running
    // speed, read at their lines), for the speed sweep: the unit maker's
    // table over speed (invented: the first two orders, from unbalance,
    // grow as the speed squared, the others, from gas pulsation, as the
    // speed), equal to the file at the running speed
    let bf = &p.blocked_forces;
    let table_speeds = [40.0, 50.0, demo::RUNNING_HZ, 66.0, 75.0];
    let mut orders = Vec::new();
    for n in 1..=17u32 {
        let f = demo::RUNNING_HZ * f64::from(n);
        let Some(k) = (0..bf.n_lines())
            .min_by(|&a, &b| (bf.freqs[a] - f).abs().total_cmp(&(bf.freqs[b] - f).abs()))
        else {
            continue;
        };
        for (i, seat) in ["s1", "s2", "s3", "s4"].iter().enumerate() {
            let v = bf.get(k, i, 0);
            if v.norm() > 0.0 {
                let power = if n <= 2 { 2 } else { 1 };
                let rows: Vec<[f64; 3]> = table_speeds
                    .iter()
                    .map(|s| {
                        let g = (s / demo::RUNNING_HZ).powi(power);
                        [*s, g * v.re, g * v.im]
                    })
                    .collect();
                orders.push(json!({"dof": format!("casing:{}+Z", node(&CASING_NODES, seat)), "order": n, "by_speed": rows}));
            }
        }
    }
    json!({
        "format": "mortise-recipe",
        "version": 1,
        "title": "Heat-pump outdoor unit on the bedroom wall (demo, invented data)",
        "components": {
            "casing": {"file": "unit-casing.uff", "note": "unit maker: casing mobility at the isolator seats",
                "uncertainty": {"relative": 0.01, "floor_db": -60}},
            "forces": {"file": "unit-blocked-forces.uff", "component": "casing", "note": "unit maker: compressor blocked forces at the seats, 58 Hz and harmonics",
                "uncertainty": {"relative": 0.05}},
            "isolator": {"file": "isolator-stiffness.csv", "note": "isolator maker: axial dynamic stiffness of one isolator",
                "import": {"column_map": {
                    "delimiter": "semicolon", "skip_rows": 3,
                    "freq": "f [Hz]",
                    "entries": [{"out_dof": "1+Z", "in_dof": "1+Z", "values": {"form": "storage-loss", "stiffness": "K' axial [N/mm]", "loss": "eta axial [-]"}}],
                    "unit": "N/mm", "out_qty": "force", "in_qty": "displacement"
                }}},
            "bracket": {"file": "brackets.uffb", "note": "bracket maker: FE receptances between seats and wall anchors"},
            "wall": {"file": "wall-accelerance.csv", "note": "acoustician: wall accelerance at the anchors (hammer test)",
                "uncertainty": {"relative": 0.01, "floor_db": -60},
                "import": {"column_map": {
                    "delimiter": "comma", "skip_rows": 3,
                    "freq": "freq_Hz", "entries": wall_entries,
                    "unit": "g/N", "phase_unit": "deg", "out_qty": "acceleration", "in_qty": "force"
                }}},
            "room": {"file": "wall-to-bed-pressure.csv", "note": "acoustician: sound pressure at the bed per anchor force",
                "uncertainty": {"relative": 0.02, "floor_db": -60},
                "import": {"column_map": {
                    "delimiter": "comma", "skip_rows": 2,
                    "freq": "freq_Hz", "entries": vibro_entries,
                    "unit": "Pa/N", "out_qty": "pressure", "in_qty": "force"
                }}}
        },
        "steps": [
            {"id": "mounted", "op": "couple", "parts": ["casing", "bracket", "wall"], "joints": joints,
             "note": "casing on four isolators on two brackets, brackets bolted to the wall"},
            {"id": "seat_to_anchor", "op": "select", "from": "mounted",
             "outputs": dofs("wall", &anchors, "X"), "inputs": dofs("casing", &seats, "Z")},
            {"id": "anchor_velocity", "op": "respond", "frf": "seat_to_anchor", "excitation": "forces",
             "note": "blocked forces at the seats drive the assembled structure"},
            {"id": "wall_impedance", "op": "convert", "from": "wall", "kind": "impedance"},
            {"id": "anchor_forces", "op": "respond", "frf": "wall_impedance", "excitation": "anchor_velocity",
             "note": "forces the brackets put into the wall"},
            {"id": "bedroom", "op": "paths", "frf": "room", "excitation": "anchor_forces",
             "note": "sound pressure at the bed, split into the four anchor paths"},
            {"id": "seat_to_wall_force", "op": "cascade", "first": "seat_to_anchor", "second": "wall_impedance",
             "note": "forces into the wall per blocked force at a seat"},
            {"id": "seat_to_bed", "op": "cascade", "first": "seat_to_wall_force", "second": "room",
             "note": "sound pressure at the bed per blocked force at a seat: the transfer the speed sweep drives"}
        ],
        "sweep": {"name": "compressor speed", "speed": {"frf": "seat_to_bed", "orders": orders},
                  "from": 40, "to": 75, "steps": 71, "spacing": "linear"},
        "variants": [
            {"name": "softer isolators", "scale": {"isolator": demo::SOFT_FACTOR}}
        ],
        "outputs": ["seat_to_anchor", "anchor_velocity", "anchor_forces", "bedroom"]
    })
}

/// Give nodes the numbers a supplier uses (UFF nodes are integers): each
/// supplier numbers its own nodes, and the recipe maps them onto each other.
fn renumber(set: &FrfSet, map: &[(&str, &str)]) -> FrfSet {
    let mut s = set.clone();
    for d in s.outputs.iter_mut().chain(s.inputs.iter_mut()) {
        if let Some((_, n)) = map.iter().find(|(from, _)| *from == d.node) {
            d.node = n.to_string();
        }
    }
    s
}

/// The unit maker's node numbers for the isolator seats.
pub const CASING_NODES: [(&str, &str); 4] =
    [("s1", "101"), ("s2", "102"), ("s3", "103"), ("s4", "104")];
/// The bracket maker's node numbers for the seats and the wall anchors.
pub const BRACKET_NODES: [(&str, &str); 8] = [
    ("s1", "1"),
    ("s2", "2"),
    ("s3", "3"),
    ("s4", "4"),
    ("a1", "11"),
    ("a2", "12"),
    ("a3", "13"),
    ("a4", "14"),
];

/// Every demo file, name and bytes, in a fixed order.
pub fn files() -> Result<Vec<(String, Vec<u8>)>> {
    let p = demo::scenario(&demo::grid())?;
    let casing = renumber(&p.casing.to_kind("mobility")?, &CASING_NODES);
    let forces = renumber(&p.blocked_forces, &CASING_NODES);
    let bracket = renumber(&p.bracket, &BRACKET_NODES);
    let recipe =
        serde_json::to_string_pretty(&recipe_json(&p)).map_err(|e| Error::io(e.to_string()))?;
    Ok(vec![
        ("unit-casing.uff".into(), uff58::write(&[casing], false)?),
        (
            "unit-blocked-forces.uff".into(),
            uff58::write(&[forces], false)?,
        ),
        (
            "isolator-stiffness.csv".into(),
            isolator_csv(&p).into_bytes(),
        ),
        ("brackets.uffb".into(), uff58::write(&[bracket], true)?),
        ("wall-accelerance.csv".into(), wall_csv(&p)?.into_bytes()),
        (
            "wall-to-bed-pressure.csv".into(),
            vibro_csv(&p).into_bytes(),
        ),
        ("heat-pump.recipe.json".into(), (recipe + "\n").into_bytes()),
    ])
}
