//! The assembly as a diagram: the recipe's components (with their source
//! and interface DOFs), each coupling step's joints as connectors between
//! the parts' DOFs (type and parameters with units), and every step in
//! recipe order as a flow from the parts to the results, outputs marked.
//!
//! Written as plain SVG text (boxes, lines and text; no axes), in the page's
//! colours. Every piece of text from the recipe is XML-escaped and cut to
//! its box; text widths are estimated from the character count (no font
//! metrics in a worker), generously, so text does not run into its
//! neighbours. The size grows with the recipe, up to [`MAX_DRAWN`]
//! components, [`MAX_DRAWN`] steps and [`MAX_DRAWN`] joints; beyond that a
//! visible note says how many more there are.
//!
//! Every clickable thing (a component, a step, a joint) is an [`DiagramItem`]
//! with its pixel box, and a `<g>` element in the SVG carrying the same
//! `data-kind`, `data-id`, `data-step` and `data-index`, whose first `<rect>`
//! is that box.
//!
//! Layout, top to bottom: the title and variants; the components, one row
//! each; the steps in recipe order, one row each (a coupling step with its
//! joints below its head, one joint a row, each part a vertical lane). The
//! flow from a component or step to the steps that read it is drawn in the
//! left margin: one vertical track per source, an arrow into each reader.

use crate::error::Result;
use crate::frf::Dof;
use crate::recipe::{vocabulary, ComponentSpec, JointSpec, JointType, Op, Recipe};
use serde::Serialize;
use std::collections::BTreeMap;
use std::fmt::Write as _;

/// The most components, steps and joints drawn (each); the rest are counted
/// in a note.
pub const MAX_DRAWN: usize = 200;
/// The most tracks of the flow in the left margin; a link that finds none
/// is left to the text of its step (which names what it reads).
const MAX_TRACKS: usize = 16;
/// The most variant lines under the title.
const MAX_VARIANT_LINES: usize = 12;
/// The longest tooltip (`<title>`) and label text, in characters.
const MAX_LABEL: usize = 400;

const MIN_WIDTH: f64 = 760.0;
const PAD: f64 = 12.0;
const TRACK: f64 = 9.0;
const FS: f64 = 12.0;
const FS_SMALL: f64 = 11.0;
/// Estimated advance of a character, in em (above the average of common
/// sans-serif and monospace fonts, so estimates err on the wide side).
const EM_NARROW: f64 = 0.62;
const ROW_GAP: f64 = 8.0;
const JOINT_ROW: f64 = 30.0;
const LANE_GAP_MIN: f64 = 130.0;

// The page's colours (www/style.css); text colours keep 4.5:1 or more on
// the fills they sit on.
pub(super) const INK: &str = "#1f2a30";
pub(super) const MUTED: &str = "#5d6b73";
pub(super) const LINE: &str = "#d9d4c8";
const HEAD: &str = "#23404a";
const ACCENT: &str = "#a3520f";
const OK: &str = "#2f7d5b";
const BAD: &str = "#a8322d";
const PAPER: &str = "#f6f4ef";
const CARD: &str = "#fcfcfa";
const STEP_BG: &str = "#eef3f2";
const STEP_LINE: &str = "#9fb0b5";
const TAG_BG: &str = "#e6eceb";
const TAG_INK: &str = "#30474f";
const MONO: &str = "ui-monospace, Menlo, Consolas, monospace";

/// One clickable thing of the diagram and its box in SVG pixels.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct DiagramItem {
    /// "component", "step" or "joint".
    pub kind: &'static str,
    /// The component's name, the step's id, or "STEP_ID#INDEX" for a joint
    /// (as a variant's `drop_joints` names it).
    pub id: String,
    /// The step a joint (or a step) belongs to.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub step: Option<String>,
    /// A joint's index in its step's joints (0-based).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub index: Option<usize>,
    /// What it is, in words (for a tooltip or a screen reader).
    pub label: String,
    pub x: f64,
    pub y: f64,
    pub w: f64,
    pub h: f64,
}

/// The drawn diagram.
#[derive(Debug, Clone, Serialize)]
pub struct Diagram {
    /// The SVG document.
    pub svg: String,
    /// The clickable things, in drawing order.
    pub items: Vec<DiagramItem>,
    /// The SVG's size in pixels.
    pub width: f64,
    pub height: f64,
    /// One sentence on what the diagram shows (its accessible name).
    pub summary: String,
}

// ---------------------------------------------------------------- text

/// Text as it may appear in SVG: control characters (and the two
/// non-characters XML refuses) become spaces or U+FFFD, runs of white space
/// one space.
pub(super) fn clean(s: &str) -> String {
    let mut out = String::with_capacity(s.len());
    let mut space = false;
    for c in s.chars() {
        let c = match c {
            '\u{FFFE}' | '\u{FFFF}' => '\u{FFFD}',
            c if c.is_control() || c.is_whitespace() => ' ',
            c => c,
        };
        if c == ' ' {
            if !space {
                out.push(' ');
            }
            space = true;
        } else {
            out.push(c);
            space = false;
        }
    }
    out.trim().to_string()
}

/// XML escaping for text and double- or single-quoted attribute values.
pub(super) fn esc(s: &str) -> String {
    let mut out = String::with_capacity(s.len() + 8);
    for c in s.chars() {
        match c {
            '&' => out.push_str("&amp;"),
            '<' => out.push_str("&lt;"),
            '>' => out.push_str("&gt;"),
            '"' => out.push_str("&quot;"),
            '\'' => out.push_str("&#39;"),
            c => out.push(c),
        }
    }
    out
}

fn char_em(c: char) -> f64 {
    // CJK, Hangul, full-width forms and pictographs take a full em
    if (c as u32) >= 0x2E80 {
        1.0
    } else {
        EM_NARROW
    }
}

/// Estimated width of `s` at font size `size` (bold about 8 % wider).
pub(super) fn text_w(s: &str, size: f64, bold: bool) -> f64 {
    let w: f64 = s.chars().map(char_em).sum::<f64>() * size;
    if bold {
        w * 1.08
    } else {
        w
    }
}

/// `s` cleaned and cut with "…" to fit `max_w` pixels.
fn fit(s: &str, max_w: f64, size: f64, bold: bool) -> String {
    let s = clean(s);
    if text_w(&s, size, bold) <= max_w {
        return s;
    }
    let k = if bold { 1.08 } else { 1.0 };
    let mut w = char_em('…') * size * k;
    let mut out = String::new();
    for c in s.chars() {
        w += char_em(c) * size * k;
        if w > max_w {
            break;
        }
        out.push(c);
    }
    out.push('…');
    out
}

/// At most [`MAX_LABEL`] characters of cleaned text.
fn cap(s: &str) -> String {
    let s = clean(s);
    if s.chars().count() <= MAX_LABEL {
        return s;
    }
    let mut t: String = s.chars().take(MAX_LABEL - 1).collect();
    t.push('…');
    t
}

/// A number as written, never rounded: the shortest text that reads back
/// as the same f64; large and small ones as "5.0e4".
fn num(x: f64) -> String {
    if x == 0.0 || !x.is_finite() {
        return format!("{x}");
    }
    if (1e-3..1e4).contains(&x.abs()) {
        return format!("{x}");
    }
    let s = format!("{x:e}");
    match s.split_once('e') {
        Some((m, e)) if !m.contains('.') => format!("{m}.0e{e}"),
        _ => s,
    }
}

/// A list of names: all of them up to three, else the first two and the count.
fn list(v: &[String]) -> String {
    if v.len() <= 3 {
        v.join(", ")
    } else {
        format!("{}, {}, … {} in all", v[0], v[1], v.len())
    }
}

// ---------------------------------------------------------------- the recipe, in words

/// Where a component's values come from, in a few words.
fn component_source(c: &ComponentSpec) -> String {
    let mut src = Vec::new();
    if let Some(f) = &c.file {
        src.push(match c.set {
            Some(i) => format!("file {f}, set {i}"),
            None => format!("file {f}"),
        });
    }
    if let Some(s) = &c.inline {
        let what = match s.signal {
            Some(k) => format!("{} spectrum", k.name()),
            None => s.kind().name().to_string(),
        };
        src.push(format!("inline {} × {} {what}", s.n_out(), s.n_in()));
    }
    if let Some(s) = &c.synth {
        let model = serde_json::to_value(s)
            .ok()
            .and_then(|v| v.get("model").and_then(|m| m.as_str()).map(str::to_string))
            .unwrap_or_else(|| "part".into());
        src.push(format!("synthesized {model}"));
    }
    let mut t = if src.is_empty() {
        "no source given".to_string()
    } else {
        src.join(" + ")
    };
    if c.select.is_some() {
        t.push_str(", selected DOFs");
    }
    if let Some(k) = &c.kind {
        t.push_str(&format!(", as {k}"));
    }
    if c.grid.is_some() {
        t.push_str(", on its own grid");
    }
    t
}

/// The DOF namespace of a label "component:node+DIR" (the text before the
/// last ':'), or the whole label.
fn namespace(dof: &str) -> &str {
    dof.rsplit_once(':').map_or(dof, |(ns, _)| ns)
}

/// A joint's type and parameters with their units: "hysteretic k = 5.0e4
/// N/m, η = 0.05"; on rotational DOFs the stiffness is per radian.
pub(crate) fn joint_text(j: &JointSpec) -> String {
    let rot = Dof::parse(&j.a, "").is_ok_and(|d| d.dir.is_rotational());
    let (ku, cu) = if rot {
        ("N·m/rad", "N·m·s/rad")
    } else {
        ("N/m", "N·s/m")
    };
    let t = j.type_name();
    match &j.kind {
        JointType::Rigid => t.to_string(),
        JointType::Spring { k } => format!("{t} k = {} {ku}", num(*k)),
        JointType::Damper { c } => format!("{t} c = {} {cu}", num(*c)),
        JointType::Hysteretic { k, eta } => {
            format!("{t} k = {} {ku}, η = {}", num(*k), num(*eta))
        }
        JointType::SpringDamper { k, c, eta } => {
            let mut s = format!("{t} k = {} {ku}", num(*k));
            if let Some(c) = c {
                s.push_str(&format!(", c = {} {cu}", num(*c)));
            }
            if let Some(e) = eta {
                s.push_str(&format!(", η = {}", num(*e)));
            }
            s
        }
        JointType::Measured { stiffness } => format!("{t} K(ω) from {stiffness}"),
    }
}

/// A step's operands other than its joints, as "name: value" in the order
/// the vocabulary lists them.
fn operands_text(op: &Op) -> Vec<String> {
    let Ok(serde_json::Value::Object(map)) = serde_json::to_value(op) else {
        return Vec::new();
    };
    let joints = joints_of(op).is_some();
    let Some(info) = vocabulary().into_iter().find(|o| o.name == op.name()) else {
        return Vec::new();
    };
    let mut out = Vec::new();
    for o in info.operands {
        if joints && o.name == "joints" {
            continue;
        }
        let Some(v) = map.get(o.name) else { continue };
        let text = match v {
            serde_json::Value::String(s) => s.clone(),
            serde_json::Value::Number(n) => n.as_f64().map_or_else(|| n.to_string(), num),
            serde_json::Value::Array(a) if a.iter().all(|x| x.is_string()) => {
                let v: Vec<String> = a
                    .iter()
                    .filter_map(|x| x.as_str().map(str::to_string))
                    .collect();
                list(&v)
            }
            other => other.to_string(),
        };
        out.push(format!("{}: {text}", o.name));
    }
    out
}

/// The parts (lanes) and joints of a coupling step.
fn joints_of(op: &Op) -> Option<(Vec<String>, &[JointSpec])> {
    match op {
        Op::Couple(c) => Some((c.parts.clone(), &c.joints)),
        Op::Decouple(d) => Some((vec![d.assembly.clone(), d.remove.clone()], &d.joints)),
        _ => None,
    }
}

// ---------------------------------------------------------------- drawing

/// A text's size, colour, weight and face.
#[derive(Clone, Copy)]
struct Font {
    size: f64,
    fill: &'static str,
    bold: bool,
    mono: bool,
}

/// A shape's fill and outline.
#[derive(Clone, Copy)]
struct Paint {
    fill: &'static str,
    stroke: &'static str,
    width: f64,
}

/// SVG text being written, with the items.
struct Canvas {
    body: String,
    items: Vec<DiagramItem>,
}

impl Canvas {
    fn rect(&mut self, x: f64, y: f64, w: f64, h: f64, rx: f64, p: Paint) {
        let _ = write!(
            self.body,
            r#"<rect x="{x:.1}" y="{y:.1}" width="{w:.1}" height="{h:.1}" rx="{rx}" fill="{}" stroke="{}" stroke-width="{}"/>"#,
            p.fill, p.stroke, p.width
        );
    }

    /// Text already cut to size; `anchor` start, middle or end.
    fn text(&mut self, x: f64, y: f64, f: Font, anchor: &str, t: &str) {
        let _ = write!(
            self.body,
            r#"<text x="{x:.1}" y="{y:.1}" font-size="{}" fill="{}"{}{}{}>{}</text>"#,
            f.size,
            f.fill,
            if f.bold { r#" font-weight="700""# } else { "" },
            if anchor == "start" {
                String::new()
            } else {
                format!(r#" text-anchor="{anchor}""#)
            },
            if f.mono {
                format!(r#" font-family="{MONO}""#)
            } else {
                String::new()
            },
            esc(t)
        );
    }

    /// A pill with a word in it, its left end at `x`; returns its width.
    fn pill(&mut self, x: f64, top: f64, word: &str, fill: &'static str, ink: &'static str) -> f64 {
        let w = text_w(word, FS_SMALL, false) + 12.0;
        self.rect(
            x,
            top + 5.0,
            w,
            16.0,
            8.0,
            Paint {
                fill,
                stroke: "none",
                width: 0.0,
            },
        );
        self.text(
            x + w / 2.0,
            top + 17.0,
            Font {
                size: FS_SMALL,
                fill: ink,
                bold: false,
                mono: false,
            },
            "middle",
            word,
        );
        w
    }

    /// Open an item's group: the group with its data attributes, its
    /// tooltip, and its box as the first rect (painted with `p`, its fill
    /// at `fill_opacity` when given).
    fn open_item(&mut self, item: DiagramItem, rx: f64, p: Paint, fill_opacity: Option<f64>) {
        let _ = write!(
            self.body,
            r#"<g data-kind="{}" data-id="{}""#,
            item.kind,
            esc(&item.id)
        );
        if let Some(s) = &item.step {
            let _ = write!(self.body, r#" data-step="{}""#, esc(s));
        }
        if let Some(i) = item.index {
            let _ = write!(self.body, r#" data-index="{i}""#);
        }
        let _ = write!(self.body, "><title>{}</title>", esc(&item.label));
        let _ = write!(
            self.body,
            r#"<rect x="{:.1}" y="{:.1}" width="{:.1}" height="{:.1}" rx="{rx}" fill="{}"{} stroke="{}" stroke-width="{}"/>"#,
            item.x,
            item.y,
            item.w,
            item.h,
            p.fill,
            fill_opacity.map_or(String::new(), |o| format!(r#" fill-opacity="{o}""#)),
            p.stroke,
            p.width,
        );
        self.items.push(item);
    }

    fn close_item(&mut self) {
        self.body.push_str("</g>");
    }
}

/// A coupling step as drawn: its lanes and joints.
struct Coupling {
    parts: Vec<String>,
    parts_more: usize,
    /// (index in the step, joint, lane of a, lane of b)
    joints: Vec<(usize, JointSpec, usize, usize)>,
    joints_more: usize,
    /// Side margin for the DOF labels.
    margin: f64,
}

/// The lanes of a joint's two ends: the part whose DOF namespace (or name)
/// its label carries; an end that matches no part goes to the first or last
/// lane, away from the other end.
fn ends(a: &str, b: &str, lane_ns: &[String]) -> (usize, usize, bool, bool) {
    let n = lane_ns.len();
    let find = |d: &str| lane_ns.iter().position(|l| l == namespace(d));
    let (fa, fb) = (find(a), find(b));
    let last = n.saturating_sub(1);
    let la = fa.unwrap_or(if fb == Some(0) { last } else { 0 });
    let mut lb = fb.unwrap_or(if la == last { 0 } else { last });
    if lb == la && n > 1 {
        lb = if la + 1 < n { la + 1 } else { la - 1 };
    }
    (la, lb, fa.is_some(), fb == Some(lb))
}

/// Draw the assembly a recipe describes.
pub fn assembly_svg(recipe: &Recipe) -> Result<Diagram> {
    let comps: Vec<(&String, &ComponentSpec)> = recipe.components.iter().take(MAX_DRAWN).collect();
    let comps_more = recipe.components.len() - comps.len();
    let steps: Vec<_> = recipe.steps.iter().take(MAX_DRAWN).collect();
    let steps_more = recipe.steps.len() - steps.len();
    let is_output = |n: &str| recipe.outputs.iter().any(|o| o == n);

    // node index: components first, then steps
    let mut node: BTreeMap<&str, usize> = BTreeMap::new();
    for (i, (n, _)) in comps.iter().enumerate() {
        node.insert(n.as_str(), i);
    }
    for (i, st) in steps.iter().enumerate() {
        node.insert(st.id.as_str(), comps.len() + i);
    }
    let n_nodes = comps.len() + steps.len();

    // coupling steps: lanes, joints (at most MAX_DRAWN in all), interface DOFs
    let mut joint_budget = MAX_DRAWN;
    let mut joints_total = 0usize;
    let mut couplings: BTreeMap<usize, Coupling> = BTreeMap::new();
    let mut interface: BTreeMap<String, Vec<String>> = BTreeMap::new();
    for (si, st) in steps.iter().enumerate() {
        let Some((parts, joints)) = joints_of(&st.op) else {
            continue;
        };
        joints_total += joints.len();
        let parts_more = parts.len().saturating_sub(MAX_DRAWN);
        let parts: Vec<String> = parts.into_iter().take(MAX_DRAWN).collect();
        let lane_ns: Vec<String> = parts
            .iter()
            .map(|p| {
                recipe
                    .components
                    .get(p)
                    .and_then(|c| c.component.clone())
                    .unwrap_or_else(|| p.clone())
            })
            .collect();
        let take = joints.len().min(joint_budget);
        joint_budget -= take;
        let mut drawn = Vec::new();
        let mut widest: f64 = 0.0;
        for (ji, j) in joints.iter().enumerate().take(take) {
            let (la, lb, ra, rb) = ends(&j.a, &j.b, &lane_ns);
            for (lane, dof, resolved) in [(la, &j.a, ra), (lb, &j.b, rb)] {
                widest = widest.max(text_w(&clean(dof), FS_SMALL, false));
                if let (true, Some(p)) = (resolved, parts.get(lane)) {
                    let v = interface.entry(p.clone()).or_default();
                    if !v.contains(dof) {
                        v.push(dof.clone());
                    }
                }
            }
            drawn.push((ji, j.clone(), la, lb));
        }
        couplings.insert(
            si,
            Coupling {
                parts,
                parts_more,
                joints: drawn,
                joints_more: joints.len() - take,
                margin: (widest + 16.0).clamp(60.0, 170.0),
            },
        );
    }

    // the flow: each step's sources (components or earlier steps drawn)
    let mut sources: Vec<Vec<usize>> = vec![Vec::new(); n_nodes];
    for (si, st) in steps.iter().enumerate() {
        let t = comps.len() + si;
        for name in st.op.reads() {
            let base = name.split_once('/').map_or(name, |(id, _)| id);
            if let Some(&s) = node.get(base) {
                if s < t && !sources[t].contains(&s) {
                    sources[t].push(s);
                }
            }
        }
    }
    // one track per source, from it to its last reader; tracks reused
    // when free (interval colouring, sources in order)
    let mut last_reader = vec![None::<usize>; n_nodes];
    for (t, srcs) in sources.iter().enumerate() {
        for &s in srcs {
            last_reader[s] = Some(last_reader[s].map_or(t, |x: usize| x.max(t)));
        }
    }
    let mut track_end: Vec<usize> = Vec::new();
    let mut track_of = vec![None::<usize>; n_nodes];
    for s in 0..n_nodes {
        let Some(end) = last_reader[s] else { continue };
        if let Some(k) = track_end.iter().position(|&e| e < s) {
            track_end[k] = end;
            track_of[s] = Some(k);
        } else if track_end.len() < MAX_TRACKS {
            track_end.push(end);
            track_of[s] = Some(track_end.len() - 1);
        }
    }
    let n_tracks = track_end.len();

    // widths
    let x0 = PAD
        + if n_tracks > 0 {
            n_tracks as f64 * TRACK + 10.0
        } else {
            0.0
        };
    let ladder_need = couplings
        .values()
        .map(|c| 2.0 * c.margin + (c.parts.len().max(2) - 1) as f64 * LANE_GAP_MIN)
        .fold(0.0, f64::max);
    let width = MIN_WIDTH.max(x0 + ladder_need + PAD).ceil();
    let bw = width - x0 - PAD;

    let mut cv = Canvas {
        body: String::new(),
        items: Vec::new(),
    };
    let mut y = PAD;

    // title, counts, variants
    let title = if recipe.title.trim().is_empty() {
        "untitled recipe".to_string()
    } else {
        recipe.title.clone()
    };
    let t = fit(&title, width - 2.0 * PAD, 14.0, true);
    cv.text(
        PAD,
        y + 14.0,
        Font {
            size: 14.0,
            fill: HEAD,
            bold: true,
            mono: false,
        },
        "start",
        &t,
    );
    y += 22.0;
    let counts = format!(
        "{} component(s) · {} step(s) · {} joint(s) · outputs: {}",
        recipe.components.len(),
        recipe.steps.len(),
        joints_total,
        if recipe.outputs.is_empty() {
            "none".to_string()
        } else {
            list(&recipe.outputs)
        }
    );
    let t = fit(&counts, width - 2.0 * PAD, FS_SMALL, false);
    cv.text(
        PAD,
        y + 11.0,
        Font {
            size: FS_SMALL,
            fill: MUTED,
            bold: false,
            mono: false,
        },
        "start",
        &t,
    );
    y += 17.0;
    for v in recipe.variants.iter().take(MAX_VARIANT_LINES) {
        let mut what: Vec<String> = v
            .scale
            .iter()
            .map(|(n, f)| format!("{n} × {}", num(*f)))
            .collect();
        if !v.drop_joints.is_empty() {
            what.push(format!("leaves out joint {}", list(&v.drop_joints)));
        }
        let line = format!("what-if '{}': {}", v.name, what.join(", "));
        let t = fit(&line, width - 2.0 * PAD, FS_SMALL, false);
        cv.text(
            PAD,
            y + 11.0,
            Font {
                size: FS_SMALL,
                fill: MUTED,
                bold: false,
                mono: false,
            },
            "start",
            &t,
        );
        y += 16.0;
    }
    if recipe.variants.len() > MAX_VARIANT_LINES {
        let t = format!(
            "… {} more variants",
            recipe.variants.len() - MAX_VARIANT_LINES
        );
        cv.text(
            PAD,
            y + 11.0,
            Font {
                size: FS_SMALL,
                fill: MUTED,
                bold: false,
                mono: false,
            },
            "start",
            &t,
        );
        y += 16.0;
    }
    y += 6.0;

    // ports (where the flow leaves a node) and heads (where it enters)
    let mut port = vec![0.0f64; n_nodes];
    let mut head = vec![(0.0f64, 0.0f64); n_nodes];

    if n_nodes == 0 {
        cv.text(
            PAD,
            y + 14.0,
            Font {
                size: FS,
                fill: MUTED,
                bold: false,
                mono: false,
            },
            "start",
            "no components and no steps yet",
        );
        y += 24.0;
    }

    // components
    if !comps.is_empty() {
        cv.text(
            x0,
            y + 11.0,
            Font {
                size: FS_SMALL,
                fill: MUTED,
                bold: true,
                mono: false,
            },
            "start",
            "components",
        );
        y += 16.0;
    }
    for (i, (name, c)) in comps.iter().enumerate() {
        let source = component_source(c);
        let mut second = Vec::new();
        if let Some(d) = interface.get(name.as_str()) {
            let ns = c.component.as_deref().unwrap_or(name);
            let short: Vec<String> = d
                .iter()
                .map(|x| match x.split_once(':') {
                    Some((p, rest)) if p == ns => rest.to_string(),
                    _ => x.clone(),
                })
                .collect();
            second.push(format!("interface {}", short.join(", ")));
        }
        for v in &recipe.variants {
            if let Some(f) = v.scale.get(name.as_str()) {
                second.push(format!("× {} in '{}'", num(*f), v.name));
            }
        }
        if let Some(n) = &c.note {
            second.push(n.clone());
        }
        let h = if second.is_empty() { 26.0 } else { 42.0 };
        let out = is_output(name);
        let mut label = format!("component {name}: {source}");
        if !second.is_empty() {
            label.push_str(&format!("; {}", second.join("; ")));
        }
        if out {
            label.push_str("; an output");
        }
        cv.open_item(
            DiagramItem {
                kind: "component",
                id: name.to_string(),
                step: None,
                index: None,
                label: cap(&label),
                x: x0,
                y,
                w: bw,
                h,
            },
            4.0,
            Paint {
                fill: CARD,
                stroke: if out { ACCENT } else { LINE },
                width: if out { 2.0 } else { 1.0 },
            },
            None,
        );
        cv.rect(
            x0,
            y,
            4.0,
            h,
            0.0,
            Paint {
                fill: OK,
                stroke: "none",
                width: 0.0,
            },
        );
        let right = if out {
            let w = text_w("output", FS_SMALL, false) + 12.0;
            cv.pill(x0 + bw - 8.0 - w, y, "output", ACCENT, "#ffffff");
            w + 8.0
        } else {
            0.0
        };
        let nm = fit(name, (bw - 30.0 - right) * 0.45, FS, true);
        cv.text(
            x0 + 12.0,
            y + 17.0,
            Font {
                size: FS,
                fill: INK,
                bold: true,
                mono: false,
            },
            "start",
            &nm,
        );
        let sx = x0 + 12.0 + text_w(&nm, FS, true) + 8.0;
        let s = fit(&source, x0 + bw - 10.0 - right - sx, FS, false);
        cv.text(
            sx,
            y + 17.0,
            Font {
                size: FS,
                fill: MUTED,
                bold: false,
                mono: false,
            },
            "start",
            &s,
        );
        if !second.is_empty() {
            let s = fit(&second.join(" · "), bw - 24.0, FS_SMALL, false);
            cv.text(
                x0 + 12.0,
                y + 33.0,
                Font {
                    size: FS_SMALL,
                    fill: MUTED,
                    bold: false,
                    mono: false,
                },
                "start",
                &s,
            );
        }
        cv.close_item();
        port[i] = y + 13.0;
        head[i] = (y, h);
        y += h + ROW_GAP;
    }
    if comps_more > 0 {
        let t = format!("… {comps_more} more components, not drawn");
        cv.text(
            x0,
            y + 12.0,
            Font {
                size: FS,
                fill: BAD,
                bold: false,
                mono: false,
            },
            "start",
            &t,
        );
        y += 20.0;
    }

    // steps
    if !steps.is_empty() {
        y += 4.0;
        cv.text(
            x0,
            y + 11.0,
            Font {
                size: FS_SMALL,
                fill: MUTED,
                bold: true,
                mono: false,
            },
            "start",
            "steps, in recipe order",
        );
        y += 16.0;
    }
    for (si, st) in steps.iter().enumerate() {
        let ni = comps.len() + si;
        let op = st.op.name();
        let operands = operands_text(&st.op);
        let out = is_output(&st.id);
        let lines = 1 + usize::from(!operands.is_empty()) + usize::from(st.note.is_some());
        let hh = match lines {
            1 => 26.0,
            2 => 42.0,
            _ => 57.0,
        };
        let coupling = couplings.get(&si);
        let rows = coupling.map_or(0, |c| c.joints.len());
        let more_row = coupling.is_some_and(|c| c.joints_more > 0 || c.parts_more > 0);
        let total = match coupling {
            Some(_) => {
                hh + 4.0 + 22.0 + rows as f64 * JOINT_ROW + if more_row { 18.0 } else { 0.0 } + 6.0
            }
            None => hh,
        };
        if coupling.is_some() {
            // the frame around the head and the joints
            cv.rect(
                x0,
                y,
                bw,
                total,
                4.0,
                Paint {
                    fill: "#ffffff",
                    stroke: if out { ACCENT } else { STEP_LINE },
                    width: if out { 2.0 } else { 1.0 },
                },
            );
        }
        let mut label = format!("step {} {} ({op})", si + 1, st.id);
        if !operands.is_empty() {
            label.push_str(&format!(": {}", operands.join("; ")));
        }
        if let Some(c) = coupling {
            label.push_str(&format!("; {} joint(s)", c.joints.len() + c.joints_more));
        }
        if out {
            label.push_str("; an output");
        }
        cv.open_item(
            DiagramItem {
                kind: "step",
                id: st.id.clone(),
                step: Some(st.id.clone()),
                index: None,
                label: cap(&label),
                x: x0,
                y,
                w: bw,
                h: hh,
            },
            4.0,
            Paint {
                fill: STEP_BG,
                stroke: if out { ACCENT } else { STEP_LINE },
                width: if out { 2.0 } else { 1.0 },
            },
            None,
        );
        let right = if out {
            let w = text_w("output", FS_SMALL, false) + 12.0;
            cv.pill(x0 + bw - 8.0 - w, y, "output", ACCENT, "#ffffff");
            w + 8.0
        } else {
            0.0
        };
        let op_w = text_w(op, FS_SMALL, false) + 12.0;
        let id = fit(
            &format!("{}. {}", si + 1, st.id),
            bw - 40.0 - right - op_w,
            FS,
            true,
        );
        cv.text(
            x0 + 10.0,
            y + 17.0,
            Font {
                size: FS,
                fill: HEAD,
                bold: true,
                mono: false,
            },
            "start",
            &id,
        );
        cv.pill(
            x0 + 10.0 + text_w(&id, FS, true) + 10.0,
            y,
            op,
            TAG_BG,
            TAG_INK,
        );
        let mut ly = y + 33.0;
        if !operands.is_empty() {
            let t = fit(&operands.join(" · "), bw - 20.0, FS_SMALL, false);
            cv.text(
                x0 + 10.0,
                ly,
                Font {
                    size: FS_SMALL,
                    fill: INK,
                    bold: false,
                    mono: false,
                },
                "start",
                &t,
            );
            ly += 15.0;
        }
        if let Some(n) = &st.note {
            let t = fit(n, bw - 20.0, FS_SMALL, false);
            cv.text(
                x0 + 10.0,
                ly,
                Font {
                    size: FS_SMALL,
                    fill: MUTED,
                    bold: false,
                    mono: false,
                },
                "start",
                &t,
            );
        }
        cv.close_item();
        port[ni] = y + 13.0;
        head[ni] = (y, hh);
        if let Some(c) = coupling {
            draw_ladder(&mut cv, recipe, &st.id, c, x0, y + hh + 4.0, bw);
        }
        y += total + ROW_GAP;
    }
    if steps_more > 0 {
        let t = format!("… {steps_more} more steps, not drawn");
        cv.text(
            x0,
            y + 12.0,
            Font {
                size: FS,
                fill: BAD,
                bold: false,
                mono: false,
            },
            "start",
            &t,
        );
        y += 20.0;
    }
    let height = (y + PAD).ceil();

    // the flow in the left margin
    let mut flow = String::new();
    for s in 0..n_nodes {
        let Some(k) = track_of[s] else { continue };
        let tx = x0 - 10.0 - k as f64 * TRACK;
        let readers: Vec<usize> = (0..n_nodes).filter(|t| sources[*t].contains(&s)).collect();
        let mut ends = Vec::new();
        for &t in &readers {
            // the reader's incoming links spread over its head, in track order
            let mut ins: Vec<usize> = sources[t]
                .iter()
                .filter_map(|&x| track_of[x].map(|kk| (kk, x)))
                .map(|(kk, _)| kk)
                .collect();
            ins.sort_unstable();
            let slot = ins.iter().position(|&kk| kk == k).unwrap_or(0);
            let (top, h) = head[t];
            let h = h.min(42.0);
            ends.push(top + h * (slot as f64 + 1.0) / (ins.len() as f64 + 1.0));
        }
        let bottom = ends.iter().copied().fold(port[s], f64::max);
        let _ = write!(
            flow,
            r#"<path d="M{x0:.1} {:.1}H{tx:.1}V{bottom:.1}" fill="none" stroke="{MUTED}" stroke-width="1.4"/>"#,
            port[s]
        );
        for &ey in &ends {
            let _ = write!(
                flow,
                r#"<path d="M{tx:.1} {ey:.1}H{:.1}" fill="none" stroke="{MUTED}" stroke-width="1.4"/><path d="M{:.1} {ey:.1}l-6 -3.5v7z" fill="{MUTED}"/>"#,
                x0 - 5.0,
                x0 - 0.5
            );
            if ey < bottom {
                let _ = write!(
                    flow,
                    r#"<circle cx="{tx:.1}" cy="{ey:.1}" r="2.2" fill="{MUTED}"/>"#
                );
            }
        }
    }

    let summary = format!(
        "Diagram of the assembly '{}': {} component(s), {} step(s), {} joint(s); outputs: {}",
        cap(&title),
        recipe.components.len(),
        recipe.steps.len(),
        joints_total,
        if recipe.outputs.is_empty() {
            "none".to_string()
        } else {
            cap(&recipe.outputs.join(", "))
        }
    );
    let mut svg = String::with_capacity(cv.body.len() + flow.len() + 512);
    let _ = write!(
        svg,
        r##"<svg xmlns="http://www.w3.org/2000/svg" width="{width}" height="{height}" viewBox="0 0 {width} {height}" font-family="system-ui, 'Segoe UI', sans-serif" font-size="{FS}"><title>{}</title><rect width="{width}" height="{height}" fill="#ffffff"/>"##,
        esc(&summary)
    );
    svg.push_str(&flow);
    svg.push_str(&cv.body);
    svg.push_str("</svg>");
    Ok(Diagram {
        svg,
        items: cv.items,
        width,
        height,
        summary,
    })
}

/// A coupling step's parts as lanes and its joints as connectors between
/// them, one row each, from `top`.
fn draw_ladder(
    cv: &mut Canvas,
    recipe: &Recipe,
    step: &str,
    c: &Coupling,
    x0: f64,
    top: f64,
    bw: f64,
) {
    let m = c.margin;
    let n = c.parts.len();
    let lane_x = |k: usize| -> f64 {
        if n < 2 {
            x0 + bw / 2.0
        } else {
            x0 + m + k as f64 * (bw - 2.0 * m) / (n - 1) as f64
        }
    };
    let end_x = |k: usize, first: bool| -> f64 {
        if n < 2 {
            if first {
                x0 + m
            } else {
                x0 + bw - m
            }
        } else {
            lane_x(k)
        }
    };
    let rows = c.joints.len() as f64;
    let gap = if n < 2 {
        bw - 2.0 * m
    } else {
        (bw - 2.0 * m) / (n - 1) as f64
    };
    for (k, p) in c.parts.iter().enumerate() {
        let x = lane_x(k);
        cv.rect(
            x - 7.0,
            top + 18.0,
            14.0,
            rows * JOINT_ROW + 4.0,
            3.0,
            Paint {
                fill: PAPER,
                stroke: "none",
                width: 0.0,
            },
        );
        let t = fit(p, gap.min(2.0 * m) - 16.0, FS_SMALL, false);
        let w = text_w(&t, FS_SMALL, false) + 12.0;
        cv.rect(
            x - w / 2.0,
            top,
            w,
            16.0,
            8.0,
            Paint {
                fill: TAG_BG,
                stroke: "none",
                width: 0.0,
            },
        );
        cv.text(
            x,
            top + 12.0,
            Font {
                size: FS_SMALL,
                fill: TAG_INK,
                bold: false,
                mono: false,
            },
            "middle",
            &t,
        );
    }
    for (r, (ji, j, la, lb)) in c.joints.iter().enumerate() {
        let ry = top + 22.0 + r as f64 * JOINT_ROW;
        let (xa, xb) = (end_x(*la, true), end_x(*lb, false));
        let dropped: Vec<&str> = recipe
            .variants
            .iter()
            .filter(|v| v.drops(step, *ji))
            .map(|v| v.name.as_str())
            .collect();
        let mut what = joint_text(j);
        if !dropped.is_empty() {
            what.push_str(&format!(
                " — left out in {}",
                dropped
                    .iter()
                    .map(|d| format!("'{d}'"))
                    .collect::<Vec<_>>()
                    .join(", ")
            ));
        }
        let mut label = format!(
            "joint {} of step {step}: {} to {}, {what}",
            ji + 1,
            j.a,
            j.b
        );
        if j.inferred {
            label.push_str(" (type read from its parameters)");
        }
        cv.open_item(
            DiagramItem {
                kind: "joint",
                id: format!("{step}#{ji}"),
                step: Some(step.to_string()),
                index: Some(*ji),
                label: cap(&label),
                x: x0 + 4.0,
                y: ry + 1.0,
                w: bw - 8.0,
                h: JOINT_ROW - 2.0,
            },
            3.0,
            Paint {
                fill: "#ffffff",
                stroke: "none",
                width: 0.0,
            },
            Some(0.0),
        );
        let ink = if dropped.is_empty() { HEAD } else { BAD };
        let ly = ry + 21.0;
        let _ = write!(
            cv.body,
            r#"<line x1="{xa:.1}" y1="{ly:.1}" x2="{xb:.1}" y2="{ly:.1}" stroke="{ink}" stroke-width="{}"{}/>"#,
            if matches!(j.kind, JointType::Rigid) {
                3.0
            } else {
                1.6
            },
            if dropped.is_empty() {
                ""
            } else {
                r#" stroke-dasharray="5 4""#
            }
        );
        for x in [xa, xb] {
            let _ = write!(
                cv.body,
                r#"<circle cx="{x:.1}" cy="{ly:.1}" r="3.5" fill="{ink}"/>"#
            );
        }
        let (left, right) = if xa <= xb {
            ((xa, &j.a), (xb, &j.b))
        } else {
            ((xb, &j.b), (xa, &j.a))
        };
        let t = fit(left.1, m - 16.0, FS_SMALL, false);
        cv.text(
            left.0 - 8.0,
            ly + 4.0,
            Font {
                size: FS_SMALL,
                fill: INK,
                bold: false,
                mono: true,
            },
            "end",
            &t,
        );
        let t = fit(right.1, m - 16.0, FS_SMALL, false);
        cv.text(
            right.0 + 8.0,
            ly + 4.0,
            Font {
                size: FS_SMALL,
                fill: INK,
                bold: false,
                mono: true,
            },
            "start",
            &t,
        );
        let t = fit(&what, bw - 24.0, FS_SMALL, false);
        let tw = text_w(&t, FS_SMALL, false);
        let mid = ((xa + xb) / 2.0)
            .max(x0 + 12.0 + tw / 2.0)
            .min(x0 + bw - 12.0 - tw / 2.0);
        cv.text(
            mid,
            ry + 11.0,
            Font {
                size: FS_SMALL,
                fill: ink,
                bold: false,
                mono: false,
            },
            "middle",
            &t,
        );
        cv.close_item();
    }
    if c.joints_more > 0 || c.parts_more > 0 {
        let mut t = Vec::new();
        if c.joints_more > 0 {
            t.push(format!("… {} more joints", c.joints_more));
        }
        if c.parts_more > 0 {
            t.push(format!("… {} more parts", c.parts_more));
        }
        let t = format!("{}, not drawn", t.join(", "));
        cv.text(
            x0 + 10.0,
            top + 22.0 + rows * JOINT_ROW + 14.0,
            Font {
                size: FS_SMALL,
                fill: BAD,
                bold: false,
                mono: false,
            },
            "start",
            &t,
        );
    }
}

#[cfg(test)]
mod tests {
    use super::super::fixtures::{contrast, well_formed};
    use super::*;
    use crate::frf::{Direction, FrfSet};
    use crate::recipe::parse;
    use crate::units::Quantity;
    use serde_json::json;

    /// The contents of every `<text>` element, entities decoded.
    fn texts(svg: &str) -> Vec<String> {
        let mut out = Vec::new();
        let mut rest = svg;
        while let Some(i) = rest.find("<text") {
            let after = &rest[i..];
            let open_end = after.find('>').unwrap();
            let close = after.find("</text>").unwrap();
            out.push(unescape(&after[open_end + 1..close]));
            rest = &after[close..];
        }
        out
    }

    fn unescape(s: &str) -> String {
        s.replace("&lt;", "<")
            .replace("&gt;", ">")
            .replace("&quot;", "\"")
            .replace("&#39;", "'")
            .replace("&amp;", "&")
    }

    /// Every item has exactly one group with its data attributes, and that
    /// group's first rect is the item's box.
    fn items_match_groups(d: &Diagram) {
        for it in &d.items {
            let mut open = format!(r#"<g data-kind="{}" data-id="{}""#, it.kind, esc(&it.id));
            if let Some(s) = &it.step {
                open.push_str(&format!(r#" data-step="{}""#, esc(s)));
            }
            if let Some(i) = it.index {
                open.push_str(&format!(r#" data-index="{i}""#));
            }
            open.push('>');
            assert_eq!(d.svg.matches(&open).count(), 1, "{open}");
            let at = d.svg.find(&open).unwrap();
            let rect = &d.svg[at..][d.svg[at..].find("<rect").unwrap()..];
            let want = format!(
                r#"<rect x="{:.1}" y="{:.1}" width="{:.1}" height="{:.1}""#,
                it.x, it.y, it.w, it.h
            );
            assert!(rect.starts_with(&want), "{want} vs {}", &rect[..80]);
        }
        assert_eq!(d.svg.matches("<g data-kind=").count(), d.items.len());
    }

    fn inside_and_apart(d: &Diagram) {
        for it in &d.items {
            assert!(
                it.x >= 0.0 && it.y >= 0.0 && it.x + it.w <= d.width && it.y + it.h <= d.height,
                "{} {} outside {} × {}",
                it.kind,
                it.id,
                d.width,
                d.height
            );
            assert!(it.w > 0.0 && it.h > 0.0);
        }
        for (i, a) in d.items.iter().enumerate() {
            for b in &d.items[i + 1..] {
                let ox = (a.x + a.w).min(b.x + b.w) - a.x.max(b.x);
                let oy = (a.y + a.h).min(b.y + b.h) - a.y.max(b.y);
                assert!(
                    ox <= 0.0 || oy <= 0.0,
                    "{} '{}' overlaps {} '{}'",
                    a.kind,
                    a.id,
                    b.kind,
                    b.id
                );
            }
        }
    }

    fn every_kind_recipe() -> String {
        let inline = FrfSet::zeros(
            "I",
            vec![10.0, 20.0],
            vec![Dof::new("I", "1", Direction::X)],
            vec![Dof::new("I", "1", Direction::X)],
            Quantity::Force,
            Quantity::Force,
        );
        json!({
            "format": "mortise-recipe", "version": 1, "title": "every kind",
            "components": {
                "A": {"file": "a.uff", "note": "supplier A's casing"},
                "B": {"synth": {"model": "network", "component": "B", "masses": [{"node": "1", "mass": 2.0}],
                      "links": [{"a": "1", "k": 8.0e4, "c": 15.0}]}, "grid": {"from": 1, "to": 10, "step": 1}},
                "K": {"file": "k.csv"},
                "I": {"inline": serde_json::to_value(&inline).unwrap()}
            },
            "steps": [
                {"id": "c", "op": "couple", "parts": ["A", "B"], "joints": [
                    {"a": "A:1+X", "b": "B:1+X", "type": "rigid"},
                    {"a": "A:2+X", "b": "B:2+X", "type": "spring", "k": 2.0e5},
                    {"a": "A:3+X", "b": "B:3+X", "type": "damper", "c": 30.0},
                    {"a": "A:4+X", "b": "B:4+X", "type": "hysteretic", "k": 5.0e4, "eta": 0.05},
                    {"a": "A:5+X", "b": "B:5+X", "type": "spring-damper", "k": 1.5e5, "c": 12.5, "eta": 0.02},
                    {"a": "A:6+X", "b": "B:6+X", "type": "measured", "stiffness": "K"},
                    {"a": "A:7+RX", "b": "B:7+RX", "k": 350.0}
                ]},
                {"id": "s", "op": "select", "from": "c", "outputs": ["A:1+X"]},
                {"id": "r", "op": "respond", "frf": "s", "excitation": "I", "note": "the response"},
                {"id": "p", "op": "paths", "frf": "c", "excitation": "I"},
                {"id": "sm", "op": "sum", "parts": ["r", "p"]},
                {"id": "cas", "op": "cascade", "first": "s", "second": "c"},
                {"id": "sc", "op": "scale", "from": "r", "factor": 2.5}
            ],
            "variants": [{"name": "no spring", "drop_joints": ["c#1"]}, {"name": "soft", "scale": {"K": 0.5}}],
            "outputs": ["c", "p", "sm"]
        })
        .to_string()
    }

    #[test]
    fn every_component_joint_and_step_is_drawn() {
        let r = parse(&every_kind_recipe()).unwrap();
        let d = assembly_svg(&r).unwrap();
        well_formed(&d.svg);
        items_match_groups(&d);
        inside_and_apart(&d);
        let t = texts(&d.svg);
        let has = |s: &str| t.iter().any(|x| x == s);
        let has_in = |s: &str| t.iter().any(|x| x.contains(s));
        // components, with where they come from
        for name in ["A", "B", "K", "I"] {
            assert!(has(name), "component {name}: {t:?}");
        }
        assert!(has("file a.uff"), "{t:?}");
        assert!(has("synthesized network, on its own grid"), "{t:?}");
        assert!(has("inline 1 × 1 transmissibility"), "{t:?}");
        assert!(has_in("supplier A's casing"), "{t:?}");
        // the interface DOFs of each part, from the joints
        assert!(
            has_in("interface 1+X, 2+X, 3+X, 4+X, 5+X, 6+X, 7+RX"),
            "{t:?}"
        );
        // every joint with its type and each parameter value with its unit
        // (the values as written in the recipe)
        for want in [
            "rigid",
            "spring k = 2.0e5 N/m — left out in 'no spring'",
            "damper c = 30 N·s/m",
            "hysteretic k = 5.0e4 N/m, η = 0.05",
            "spring-damper k = 1.5e5 N/m, c = 12.5 N·s/m, η = 0.02",
            "measured K(ω) from K",
            "spring k = 350 N·m/rad",
        ] {
            assert!(has(want), "{want}: {t:?}");
        }
        for k in 1..=6 {
            assert!(has(&format!("A:{k}+X")) && has(&format!("B:{k}+X")), "{k}");
        }
        assert!(has("A:7+RX") && has("B:7+RX"));
        // the dropped joint is dashed, the others not
        assert_eq!(d.svg.matches("stroke-dasharray").count(), 1);
        // every step in order, with its operation and operands
        for (n, (id, op)) in [
            ("c", "couple"),
            ("s", "select"),
            ("r", "respond"),
            ("p", "paths"),
            ("sm", "sum"),
            ("cas", "cascade"),
            ("sc", "scale"),
        ]
        .iter()
        .enumerate()
        {
            assert!(has(&format!("{}. {id}", n + 1)), "{id}: {t:?}");
            assert!(has(op), "{op}");
        }
        assert!(has("frf: s · excitation: I"), "{t:?}");
        assert!(has("from: r · factor: 2.5"), "{t:?}");
        assert!(has("first: s · second: c"), "{t:?}");
        assert!(has("the response"));
        // outputs marked, variants listed
        assert_eq!(t.iter().filter(|x| *x == "output").count(), 3);
        assert!(has("what-if 'no spring': leaves out joint c#1"), "{t:?}");
        assert!(has("what-if 'soft': K × 0.5"), "{t:?}");
        assert!(has_in("× 0.5 in 'soft'"), "{t:?}");
        // the items: 4 components, 7 steps, 7 joints
        let count = |k: &str| d.items.iter().filter(|i| i.kind == k).count();
        assert_eq!(
            (count("component"), count("step"), count("joint")),
            (4, 7, 7)
        );
        let j = d.items.iter().find(|i| i.id == "c#3").unwrap();
        assert_eq!((j.step.as_deref(), j.index), (Some("c"), Some(3)));
        assert!(j.label.contains("hysteretic k = 5.0e4 N/m, η = 0.05"));
        // the flow: one arrow per link drawn (c reads A, B, K; s reads c; r
        // reads s, I; p reads c, I; sm reads r, p; cas reads s, c; sc reads r)
        assert_eq!(d.svg.matches("l-6 -3.5v7z").count(), 13);
    }

    #[test]
    fn numbers_are_shown_as_written() {
        for (x, s) in [
            (5.0e4, "5.0e4"),
            (2.35e5, "2.35e5"),
            (0.05, "0.05"),
            (15.0, "15"),
            (1e-4, "1.0e-4"),
            (0.0, "0"),
            (9999.5, "9999.5"),
            (-3.0e6, "-3.0e6"),
        ] {
            assert_eq!(num(x), s);
            // the text reads back as the same number
            assert_eq!(s.parse::<f64>().unwrap(), x);
        }
    }

    #[test]
    fn hostile_names_are_escaped() {
        let name = "x<&\"'>y";
        let text = json!({
            "format": "mortise-recipe", "version": 1, "title": "<svg onload=alert(1)> & co",
            "components": {
                name: {"file": "a<b>.uff", "note": "</text><script>alert(1)</script>\u{1}\u{7}"},
                "B": {"file": "b.uff"}
            },
            "steps": [{"id": "s<t&\"u", "op": "couple", "parts": [name, "B"],
                       "joints": [{"a": "x<&\"'>y:1+X", "b": "B:1+X", "type": "measured", "stiffness": "B"}],
                       "note": "]]><!-- -->"}],
            "variants": [{"name": "v<\"&'", "drop_joints": ["s<t&\"u#0"]}],
            "outputs": ["s<t&\"u"]
        })
        .to_string();
        let r = parse(&text).unwrap();
        let d = assembly_svg(&r).unwrap();
        well_formed(&d.svg);
        items_match_groups(&d);
        assert!(!d.svg.contains("<script"));
        assert!(!d.svg.contains("<svg onload"));
        assert!(!d.svg.contains("<!--"));
        let t = texts(&d.svg);
        assert!(t.iter().any(|x| x == name), "{t:?}");
        assert!(t.iter().any(|x| x == "file a<b>.uff"), "{t:?}");
        assert!(
            t.iter()
                .any(|x| x.contains("</text><script>alert(1)</script>")),
            "{t:?}"
        );
        assert!(t.iter().any(|x| x == "x<&\"'>y:1+X"), "{t:?}");
        assert!(t.iter().any(|x| x.contains("left out in 'v<\"&'")), "{t:?}");
        assert!(d.svg.contains(r#"data-id="x&lt;&amp;&quot;&#39;&gt;y""#));
        assert!(d
            .items
            .iter()
            .any(|i| i.kind == "joint" && i.id == "s<t&\"u#0"));
    }

    #[test]
    fn long_text_is_cut_to_its_box() {
        let long = "n".repeat(5000);
        let text = json!({
            "format": "mortise-recipe", "version": 1, "title": long,
            "components": {&long: {"file": format!("{long}.uff"), "note": long}},
            "steps": [{"id": "s", "op": "scale", "from": &long, "factor": 2.0, "note": long}],
            "outputs": ["s"]
        })
        .to_string();
        let d = assembly_svg(&parse(&text).unwrap()).unwrap();
        well_formed(&d.svg);
        inside_and_apart(&d);
        assert_eq!(d.width, MIN_WIDTH);
        // every text, at its size and anchor, lies within the drawing
        let mut rest = d.svg.as_str();
        let mut n = 0;
        while let Some(i) = rest.find("<text ") {
            let tag = &rest[i..i + rest[i..].find('>').unwrap()];
            let attr = |k: &str| -> Option<&str> {
                let at = tag.find(&format!(" {k}=\""))? + k.len() + 3;
                Some(&tag[at..at + tag[at..].find('"')?])
            };
            let x: f64 = attr("x").unwrap().parse().unwrap();
            let size: f64 = attr("font-size").unwrap().parse().unwrap();
            let body = &rest[i + tag.len() + 1..];
            let t = unescape(&body[..body.find("</text>").unwrap()]);
            let w = text_w(&t, size, attr("font-weight").is_some());
            let (l, r) = match attr("text-anchor") {
                Some("middle") => (x - w / 2.0, x + w / 2.0),
                Some("end") => (x - w, x),
                _ => (x, x + w),
            };
            assert!(l >= 0.0 && r <= d.width, "{t}: {l} to {r} of {}", d.width);
            n += 1;
            rest = &rest[i + 5..];
        }
        assert!(n >= 6, "{n} texts");
        // the name is whole in data-id (the page maps clicks by it), cut in
        // the tooltip, so the output grows with the input, not beyond
        assert!(d.svg.len() < 5 * 5000 + 20_000, "{}", d.svg.len());
    }

    #[test]
    fn the_demo_recipe_is_drawn_whole_and_apart() {
        let p = crate::demo::scenario(&crate::demo::grid()).unwrap();
        let text = crate::demo_files::recipe_json(&p).to_string();
        let r = parse(&text).unwrap();
        let d = assembly_svg(&r).unwrap();
        well_formed(&d.svg);
        items_match_groups(&d);
        inside_and_apart(&d);
        let t = texts(&d.svg);
        for name in r.components.keys() {
            assert!(t.iter().any(|x| x == name), "{name}");
        }
        let mut joints = 0;
        for (n, st) in r.steps.iter().enumerate() {
            assert!(t.iter().any(|x| *x == format!("{}. {}", n + 1, st.id)));
            if let Some((_, js)) = joints_of(&st.op) {
                for j in js {
                    assert!(t.contains(&j.a) && t.contains(&j.b));
                    joints += 1;
                }
            }
        }
        // four isolators (measured) and four bolted anchors (rigid)
        assert_eq!(joints, 8);
        assert_eq!(
            t.iter()
                .filter(|x| *x == "measured K(ω) from isolator")
                .count(),
            4
        );
        assert_eq!(t.iter().filter(|x| *x == "rigid").count(), 4);
        assert_eq!(t.iter().filter(|x| *x == "output").count(), r.outputs.len());
        assert_eq!(d.items.len(), r.components.len() + r.steps.len() + 8);
        println!(
            "# measure demo diagram: {} × {} px, {} items, {} bytes",
            d.width,
            d.height,
            d.items.len(),
            d.svg.len()
        );
    }

    #[test]
    fn beyond_the_cap_a_note_counts_the_rest() {
        let n = MAX_DRAWN + 50;
        let mut comps = serde_json::Map::new();
        for i in 0..n {
            comps.insert(format!("c{i}"), json!({"file": "f.uff"}));
        }
        let joints: Vec<_> = (0..n)
            .map(|i| json!({"a": format!("c0:{i}+X"), "b": format!("c1:{i}+X")}))
            .collect();
        let mut steps =
            vec![json!({"id": "s0", "op": "couple", "parts": ["c0", "c1"], "joints": joints})];
        for i in 1..n {
            steps.push(json!({"id": format!("s{i}"), "op": "scale", "from": format!("s{}", i - 1), "factor": 2.0}));
        }
        let text = json!({"format": "mortise-recipe", "version": 1, "components": comps,
                          "steps": steps, "outputs": ["s0"]})
        .to_string();
        let d = assembly_svg(&parse(&text).unwrap()).unwrap();
        well_formed(&d.svg);
        items_match_groups(&d);
        inside_and_apart(&d);
        let count = |k: &str| d.items.iter().filter(|i| i.kind == k).count();
        assert_eq!(
            (count("component"), count("step"), count("joint")),
            (MAX_DRAWN, MAX_DRAWN, MAX_DRAWN)
        );
        let t = texts(&d.svg);
        assert!(
            t.iter().any(|x| x == "… 50 more components, not drawn"),
            "{t:?}"
        );
        assert!(t.iter().any(|x| x == "… 50 more steps, not drawn"));
        assert!(t.iter().any(|x| x == "… 50 more joints, not drawn"));
        // the counts say the whole recipe
        assert!(t
            .iter()
            .any(|x| x.starts_with("250 component(s) · 250 step(s) · 250 joint(s)")));
        println!(
            "# measure capped diagram: {} × {} px, {} bytes",
            d.width,
            d.height,
            d.svg.len()
        );
        assert!(d.svg.len() < 2_000_000);
    }

    #[test]
    fn text_colours_keep_4_5_to_1_on_their_fills() {
        // WCAG 2.1 SC 1.4.3: at least 4.5:1 for text under 18 pt
        assert!((contrast("#000000", "#ffffff") - 21.0).abs() < 1e-9);
        let white = "#ffffff";
        for (text, fill) in [
            (INK, CARD),
            (MUTED, CARD),
            (HEAD, STEP_BG),
            (INK, STEP_BG),
            (MUTED, STEP_BG),
            (white, ACCENT),
            (TAG_INK, TAG_BG),
            (INK, white),
            (HEAD, white),
            (MUTED, white),
            (BAD, white),
            (HEAD, PAPER),
            (BAD, PAPER),
        ] {
            let r = contrast(text, fill);
            assert!(r >= 4.5, "{text} on {fill}: {r:.2}");
        }
    }

    #[test]
    fn an_empty_recipe_draws_a_note() {
        let d =
            assembly_svg(&parse(r#"{"format":"mortise-recipe","version":1}"#).unwrap()).unwrap();
        well_formed(&d.svg);
        assert!(d.items.is_empty());
        assert!(texts(&d.svg)
            .iter()
            .any(|x| x == "no components and no steps yet"));
    }
}
