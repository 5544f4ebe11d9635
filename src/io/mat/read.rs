//! The file as a list of variables ([`variables`]) and one FRF set read
//! through a [`MatMap`] ([`read`]).

use super::array::{self, Class, Head, Numeric};
use super::element::{inflate, type_name, Cursor, Origin, MI_COMPRESSED, MI_MATRIX};
use super::header::{self, Endian, HEADER_LEN};
use super::map::{MatLayout, MatMap, KEYS_HELP};
use crate::error::{quote, Error, Result};
use crate::frf::{Dof, FrfSet, SignalKind};
use crate::io::csv::FreqUnit;
use crate::limits::Limits;
use crate::units::{factor_for, ratio_factor, Quantity};
use num_complex::Complex64;
use std::borrow::Cow;

/// Bytes inflated to look at a compressed variable's flags, dimensions and name.
const LOOK_BYTES: usize = 64 * 1024;

/// One top-level element of the file.
#[derive(Debug, Clone, Copy)]
struct Entry<'a> {
    /// File offset of its tag.
    at: usize,
    ty: u32,
    data: &'a [u8],
    data_at: usize,
}

/// A variable's bytes: the file's, or inflated ones.
struct Opened<'a> {
    buf: Cow<'a, [u8]>,
    origin: Origin,
    start: usize,
    end: usize,
}

impl Opened<'_> {
    fn cursor(&self, endian: Endian) -> Cursor<'_> {
        Cursor::new(&self.buf[..self.end], self.start, endian, self.origin)
    }
}

/// A variable as listed: what it is, and where.
#[derive(Debug, Clone, PartialEq, serde::Serialize)]
pub struct VarInfo {
    pub name: String,
    /// MATLAB's class name ("double", "cell", "struct", ...; "logical").
    pub class: String,
    pub dims: Vec<usize>,
    pub complex: bool,
    /// Stored compressed (miCOMPRESSED).
    pub compressed: bool,
    /// File offset of the variable's element.
    pub byte: usize,
}

impl VarInfo {
    /// "H (double, 3×2×400, complex)".
    pub fn describe(&self) -> String {
        let dims = self
            .dims
            .iter()
            .map(|d| d.to_string())
            .collect::<Vec<_>>()
            .join("×");
        let numeric = !matches!(
            self.class.as_str(),
            "cell" | "struct" | "char" | "object" | "sparse" | "function handle" | "opaque object"
        ) && !self.class.starts_with("unknown");
        if numeric {
            format!(
                "{} ({}, {dims}, {})",
                quote(&self.name),
                self.class,
                if self.complex { "complex" } else { "real" }
            )
        } else {
            format!("{} ({}, {dims})", quote(&self.name), self.class)
        }
    }
}

struct File<'a> {
    bytes: &'a [u8],
    endian: Endian,
    entries: Vec<(Entry<'a>, Head)>,
}

fn entries<'a>(bytes: &'a [u8], endian: Endian) -> Result<Vec<Entry<'a>>> {
    let mut c = Cursor::new(bytes, HEADER_LEN, endian, Origin::File);
    let mut out = Vec::new();
    while !c.at_end() {
        let what = format!("variable {}", out.len() + 1);
        let el = c.next(&what)?;
        if el.ty != MI_MATRIX && el.ty != MI_COMPRESSED {
            return Err(Error::parse(format!(
                "a top-level element of type {}; expected miMATRIX or miCOMPRESSED",
                type_name(el.ty)
            ))
            .field(what)
            .at_byte(el.at));
        }
        out.push(Entry {
            at: el.at,
            ty: el.ty,
            data: el.data,
            data_at: el.data_at,
        });
    }
    Ok(out)
}

/// The variable's bytes (`bytes` is the whole file); `look` inflates only
/// its first bytes.
fn open<'a>(
    bytes: &'a [u8],
    e: &Entry<'a>,
    endian: Endian,
    limits: &Limits,
    look: bool,
) -> Result<Opened<'a>> {
    if e.ty == MI_MATRIX {
        return Ok(Opened {
            buf: Cow::Borrowed(bytes),
            origin: Origin::File,
            start: e.data_at,
            end: e.data_at + e.data.len(),
        });
    }
    let v = inflate(e.data, e.at, limits, look.then_some(LOOK_BYTES))?;
    let origin = Origin::Inflated { at: e.at };
    let what = "compressed variable";
    if look {
        if v.len() < 8 {
            return Err(origin.err(
                Error::parse(format!(
                    "the compressed element inflates to {} bytes; expected a data element tag",
                    v.len()
                ))
                .field(what),
                0,
            ));
        }
        let ty = endian.u32([v[0], v[1], v[2], v[3]]);
        if ty != MI_MATRIX {
            return Err(origin.err(
                Error::parse(format!(
                    "the compressed element holds {}; expected miMATRIX",
                    type_name(ty)
                ))
                .field(what),
                0,
            ));
        }
        let size = endian.u32([v[4], v[5], v[6], v[7]]) as usize;
        let end = (8usize.saturating_add(size)).min(v.len());
        return Ok(Opened {
            buf: Cow::Owned(v),
            origin,
            start: 8,
            end,
        });
    }
    let mut c = Cursor::new(&v, 0, endian, origin);
    let el = c.next(what)?;
    if el.ty != MI_MATRIX {
        return Err(origin.err(
            Error::parse(format!(
                "the compressed element holds {}; expected miMATRIX",
                type_name(el.ty)
            ))
            .field(what),
            el.at,
        ));
    }
    let (start, end) = (el.data_at, el.data_at + el.data.len());
    Ok(Opened {
        buf: Cow::Owned(v),
        origin,
        start,
        end,
    })
}

impl<'a> File<'a> {
    fn parse(bytes: &'a [u8], limits: &Limits) -> Result<File<'a>> {
        let h = header::parse(bytes)?;
        let mut list = Vec::new();
        for (n, e) in entries(bytes, h.endian)?.into_iter().enumerate() {
            let what = format!("variable {}", n + 1);
            if e.data.is_empty() {
                return Err(
                    Error::parse("an empty miMATRIX element; expected a named variable")
                        .field(what)
                        .at_byte(e.at),
                );
            }
            let o = open(bytes, &e, h.endian, limits, true)?;
            let mut c = o.cursor(h.endian);
            let head = array::head(&mut c, &what)?;
            list.push((e, head));
        }
        Ok(File {
            bytes,
            endian: h.endian,
            entries: list,
        })
    }

    fn names(&self) -> String {
        if self.entries.is_empty() {
            return "the file holds no variables".into();
        }
        let list: Vec<String> = self
            .entries
            .iter()
            .take(20)
            .map(|(e, h)| info(e, h).describe())
            .collect();
        let more = if self.entries.len() > 20 {
            format!(" and {} more", self.entries.len() - 20)
        } else {
            String::new()
        };
        format!("the file holds {}{more}", list.join(", "))
    }

    fn find(&self, name: &str, key: &str) -> Result<(Entry<'a>, &Head)> {
        self.entries
            .iter()
            .find(|(_, h)| h.name == name)
            .map(|(e, h)| (*e, h))
            .ok_or_else(|| {
                Error::usage(format!(
                    "no variable '{}' in the file; {}",
                    quote(name),
                    self.names()
                ))
                .field(format!("mat.{key}"))
            })
    }

    /// A numeric variable's values.
    fn numeric(&self, name: &str, key: &str, limits: &Limits) -> Result<(Head, Numeric)> {
        let (e, h) = self.find(name, key)?;
        let field = format!("mat.{key} ('{}')", quote(name));
        refuse_non_numeric(h, &field).map_err(|x| x.at_byte(e.at))?;
        let o = open(self.bytes, &e, self.endian, limits, false)?;
        let mut c = o.cursor(self.endian);
        let what = format!("variable '{}'", quote(name));
        let h2 = array::head(&mut c, &what)?;
        let v = array::numeric(&mut c, &h2, limits, &what)?;
        Ok((h2, v))
    }

    fn labels(&self, name: &str, key: &str, limits: &Limits) -> Result<Vec<String>> {
        let (e, _) = self.find(name, key)?;
        let o = open(self.bytes, &e, self.endian, limits, false)?;
        let mut c = o.cursor(self.endian);
        let what = format!("variable '{}'", quote(name));
        let h = array::head(&mut c, &what)?;
        array::strings(&mut c, &h, limits, &what).map_err(|x| {
            let inner = x.field.clone();
            Error {
                field: Some(match inner {
                    Some(f) => format!("mat.{key}: {f}"),
                    None => format!("mat.{key}"),
                }),
                ..x
            }
        })
    }
}

fn info(e: &Entry<'_>, h: &Head) -> VarInfo {
    VarInfo {
        name: h.name.clone(),
        class: if h.logical {
            "logical".into()
        } else {
            h.class.name()
        },
        dims: h.dims.clone(),
        complex: h.complex,
        compressed: e.ty == MI_COMPRESSED,
        byte: e.at,
    }
}

fn refuse_non_numeric(h: &Head, field: &str) -> Result<()> {
    let why = match h.class {
        c if c.is_numeric() && !h.logical => return Ok(()),
        _ if h.logical => "a logical array".to_string(),
        Class::Struct | Class::Object => format!(
            "a {}; mortise reads numeric arrays, not structs: save the field itself as a variable (e.g. H = s.H) or give the struct to scipy.io.savemat as separate variables",
            h.class.name()
        ),
        Class::Opaque => "an opaque object (a MATLAB string, table or other class object)".to_string(),
        Class::Sparse => "a sparse array; save it with full(...)".to_string(),
        c => format!("a {} array", c.name()),
    };
    Err(Error::usage(format!(
        "variable '{}' is {why}; expected a numeric array",
        quote(&h.name)
    ))
    .field(field.to_string()))
}

/// The variables of a level-5 MAT-file: name, class, dimensions, complex or
/// real (what `mortise inspect` shows before a mapping is given).
pub fn variables(bytes: &[u8], file: &str) -> Result<Vec<VarInfo>> {
    let f = File::parse(bytes, &Limits::default()).map_err(|e| e.in_file(file))?;
    Ok(f.entries.iter().map(|(e, h)| info(e, h)).collect())
}

/// The error for a MAT-file read without a mapping: what it holds and what
/// to give.
pub fn mapping_needed(bytes: &[u8], file: &str) -> Error {
    match File::parse(bytes, &Limits::default()) {
        Err(e) => e.in_file(file),
        Ok(f) => Error::usage(format!(
            "this is a MAT-file, so it needs a MAT mapping: which variable is the frequency, which the FRFs, \
their layout, DOFs, quantities and unit; {}. Give {KEYS_HELP}",
            f.names()
        ))
        .in_file(file),
    }
}

fn to_hz(u: FreqUnit, v: f64) -> f64 {
    match u {
        FreqUnit::Hz => v,
        FreqUnit::KHz => v * 1000.0,
        FreqUnit::RadPerS => v / (2.0 * std::f64::consts::PI),
    }
}

/// The frequency vector in Hz, checked: a real vector of finite,
/// non-negative, strictly increasing values.
fn frequencies(f: &File<'_>, map: &MatMap, limits: &Limits) -> Result<Vec<f64>> {
    let (h, v) = f.numeric(&map.freq, "freq", limits)?;
    let field = format!("mat.freq ('{}')", quote(&map.freq));
    if h.complex {
        return Err(Error::usage(format!(
            "the frequency variable is complex ({}); expected a real vector",
            h.describe()
        ))
        .field(field));
    }
    if h.dims.iter().filter(|&&d| d != 1).count() > 1 || v.re.is_empty() {
        return Err(Error::usage(format!(
            "the frequency variable is {}; expected a vector (1×n or n×1) of at least one value",
            h.describe()
        ))
        .field(field));
    }
    let mut out = Vec::with_capacity(v.re.len());
    for (k, &x) in v.re.iter().enumerate() {
        let hz = to_hz(map.freq_unit, x);
        if !hz.is_finite() {
            return Err(Error::numeric(format!(
                "value {} is {x}; expected finite frequencies",
                k + 1
            ))
            .field(field));
        }
        if hz < 0.0 {
            return Err(Error::grid(format!("value {} is {x}, negative", k + 1)).field(field));
        }
        if let Some(&prev) = out.last() {
            if hz <= prev {
                return Err(Error::grid(format!(
                    "value {} ({hz} Hz) does not exceed value {} ({prev} Hz); expected strictly increasing frequencies",
                    k + 1,
                    k
                ))
                .field(field));
            }
        }
        out.push(hz);
    }
    Ok(out)
}

/// DOF labels for one side: given in the mapping or read from a variable.
fn dof_texts(
    f: &File<'_>,
    given: &[String],
    var: &Option<String>,
    key: &str,
    limits: &Limits,
) -> Result<Option<(Vec<String>, String)>> {
    match (given.is_empty(), var) {
        (false, Some(_)) => Err(Error::usage(format!(
            "both \"{key}\" and \"{key}_var\" are given; give the labels one way"
        ))
        .field(format!("mat.{key}"))),
        (false, None) => Ok(Some((given.to_vec(), format!("mat.{key}")))),
        (true, Some(v)) => Ok(Some((
            f.labels(v, &format!("{key}_var"), limits)?,
            format!("mat.{key}_var ('{}')", quote(v)),
        ))),
        (true, None) => Ok(None),
    }
}

fn parse_dofs(texts: &[String], field: &str, component: &str) -> Result<Vec<Dof>> {
    texts
        .iter()
        .enumerate()
        .map(|(n, t)| {
            Dof::parse(t, component).map_err(|e| e.field(format!("{field}, label {}", n + 1)))
        })
        .collect()
}

fn no_twice(dofs: &[Dof], side: &str, field: &str) -> Result<()> {
    for (a, d) in dofs.iter().enumerate() {
        if dofs[..a].iter().any(|e| e.same_place(d)) {
            return Err(Error::dof(format!(
                "{side} DOF {d} is given twice (label {}); expected each DOF once",
                a + 1
            ))
            .field(field.to_string()));
        }
    }
    Ok(())
}

/// Read one FRF set (or spectrum set, with `signal`) from a level-5
/// MAT-file through a mapping. DOFs without a component get `component`.
pub fn read(
    bytes: &[u8],
    file: &str,
    map: &MatMap,
    component: &str,
    signal: Option<SignalKind>,
    limits: &Limits,
) -> Result<(FrfSet, Vec<String>)> {
    read_inner(bytes, map, component, signal, limits).map_err(|e| e.in_file(file))
}

fn read_inner(
    bytes: &[u8],
    map: &MatMap,
    component: &str,
    signal: Option<SignalKind>,
    limits: &Limits,
) -> Result<(FrfSet, Vec<String>)> {
    let f = File::parse(bytes, limits)?;
    let spectrum = signal.is_some();
    if spectrum {
        if map.layout.is_matrix() {
            return Err(Error::usage(format!(
                "spectra (the import options declare {}) have no inputs; expected the layout freq-frf or frf-freq, not {}",
                signal.map_or("", |s| s.name()),
                map.layout.name()
            ))
            .field("mat.layout"));
        }
        for (given, key) in [
            (!map.in_dofs.is_empty(), "in_dofs"),
            (map.in_dofs_var.is_some(), "in_dofs_var"),
            (map.in_qty.is_some(), "in_qty"),
        ] {
            if given {
                return Err(Error::usage(format!(
                    "\"{key}\" is given, but spectra have no input (their input is the reference); leave it out"
                ))
                .field(format!("mat.{key}")));
            }
        }
    }
    let in_qty = match (map.in_qty, spectrum) {
        (Some(q), false) => q,
        (None, true) => Quantity::Dimensionless,
        _ => {
            return Err(Error::usage(
                "the MAT mapping needs \"in_qty\" (force, displacement, ...) for FRFs",
            )
            .field("mat.in_qty"))
        }
    };
    // which variables: the FRF array's head, before any value is read
    let (_, frf_head) = f.find(&map.frf, "frf")?;
    let frf_field = format!("mat.frf ('{}')", quote(&map.frf));
    refuse_non_numeric(frf_head, &frf_field)?;
    let freqs = frequencies(&f, map, limits)?;
    let n = freqs.len();
    let want = if map.layout.is_matrix() { 3 } else { 2 };
    let d = &frf_head.dims;
    if d.len() > want && d[want..].iter().any(|&x| x != 1) {
        return Err(Error::usage(format!(
            "the FRF variable is {}; the layout {} expects {want} dimensions",
            frf_head.describe(),
            map.layout.name()
        ))
        .field(frf_field));
    }
    let mut dims = d.clone();
    dims.resize(want.max(dims.len()), 1);
    let freq_axis = match map.layout {
        MatLayout::OutInFreq => 2,
        MatLayout::FreqOutIn | MatLayout::FreqFrf => 0,
        MatLayout::FrfFreq => 1,
    };
    if dims[freq_axis] != n {
        return Err(Error::usage(format!(
            "the FRF variable is {} and the layout {} puts the frequency lines on dimension {} ({}), but the frequency variable '{}' has {n} values",
            frf_head.describe(),
            map.layout.name(),
            freq_axis + 1,
            dims[freq_axis],
            quote(&map.freq)
        ))
        .field(frf_field));
    }
    // DOFs
    let outs = dof_texts(&f, &map.out_dofs, &map.out_dofs_var, "out_dofs", limits)?;
    let ins = if spectrum {
        None
    } else {
        dof_texts(&f, &map.in_dofs, &map.in_dofs_var, "in_dofs", limits)?
    };
    let Some((out_texts, out_field)) = outs else {
        return Err(Error::usage(
            "the MAT mapping needs the output DOFs: \"out_dofs\" (a list of labels) or \"out_dofs_var\" (a cell array of labels in the file)",
        )
        .field("mat.out_dofs"));
    };
    let (in_texts, in_field) = match ins {
        Some(x) => x,
        None if spectrum => (Vec::new(), String::new()),
        None => {
            return Err(Error::usage(
                "the MAT mapping needs the input DOFs: \"in_dofs\" (a list of labels) or \"in_dofs_var\" (a cell array of labels in the file)",
            )
            .field("mat.in_dofs"))
        }
    };
    let out_list = parse_dofs(&out_texts, &out_field, component)?;
    let in_list = if spectrum {
        Vec::new()
    } else {
        parse_dofs(&in_texts, &in_field, component)?
    };
    // (output index, input index) of each stored FRF, in storage order
    let (outputs, inputs, slots): (Vec<Dof>, Vec<Dof>, Vec<(usize, usize)>) = if map
        .layout
        .is_matrix()
    {
        let (no, ni) = match map.layout {
            MatLayout::OutInFreq => (dims[0], dims[1]),
            _ => (dims[1], dims[2]),
        };
        for (list, count, field, side) in [
            (&out_list, no, &out_field, "output"),
            (&in_list, ni, &in_field, "input"),
        ] {
            if list.len() != count {
                return Err(Error::usage(format!(
                    "{} {side} DOF label(s) for the FRF variable's {count} {side}s ({}, layout {})",
                    list.len(),
                    frf_head.describe(),
                    map.layout.name()
                ))
                .field(field.clone()));
            }
        }
        no_twice(&out_list, "output", &out_field)?;
        no_twice(&in_list, "input", &in_field)?;
        let slots = (0..ni).flat_map(|j| (0..no).map(move |i| (i, j))).collect();
        (out_list, in_list, slots)
    } else {
        let nf = if map.layout == MatLayout::FreqFrf {
            dims[1]
        } else {
            dims[0]
        };
        if out_list.len() != nf || (!spectrum && in_list.len() != nf) {
            return Err(Error::usage(format!(
                "{} output and {} input DOF label(s) for the FRF variable's {nf} FRFs ({}, layout {}); expected one output and one input per FRF",
                out_list.len(),
                in_list.len(),
                frf_head.describe(),
                map.layout.name()
            ))
            .field(out_field.clone()));
        }
        let mut outputs: Vec<Dof> = Vec::new();
        let mut inputs: Vec<Dof> = Vec::new();
        let mut slots = Vec::new();
        for k in 0..nf {
            let od = out_list[k].clone();
            let id = if spectrum {
                Dof::scalar("", "ref")
            } else {
                in_list[k].clone()
            };
            let place = |list: &mut Vec<Dof>, d: Dof, side: &str, field: &str| -> Result<usize> {
                if let Some(p) = list.iter().position(|x| x == &d) {
                    return Ok(p);
                }
                if list.iter().any(|x| x.same_place(&d)) {
                    return Err(Error::dof(format!(
                        "{side} {d} appears with both signs (label {}); give each DOF one sign",
                        k + 1
                    ))
                    .field(field.to_string()));
                }
                list.push(d);
                Ok(list.len() - 1)
            };
            let i = place(&mut outputs, od.clone(), "output", &out_field)?;
            let j = place(&mut inputs, id.clone(), "input", &in_field)?;
            if slots.contains(&(i, j)) {
                return Err(Error::dof(format!(
                    "{od} / {id} is given twice (FRF {}); expected each FRF once",
                    k + 1
                ))
                .field(out_field.clone()));
            }
            slots.push((i, j));
        }
        (outputs, inputs, slots)
    };
    limits.check_set("the MAT-file's FRF set", n, outputs.len(), inputs.len())?;
    // the values
    let (_, v) = f.numeric(&map.frf, "frf", limits)?;
    let unit = map.unit.trim();
    let factor = |od: &Dof, id: &Dof| -> Result<f64> {
        if unit.is_empty() || unit.eq_ignore_ascii_case("si") {
            return Ok(1.0);
        }
        match signal {
            Some(sig) => {
                let f = factor_for(unit, map.out_qty, od.dir.is_rotational())
                    .map_err(|x| x.field("mat.unit"))?;
                Ok(if sig.has_phase() { f } else { f * f })
            }
            None => ratio_factor(
                unit,
                map.out_qty,
                od.dir.is_rotational(),
                in_qty,
                id.dir.is_rotational(),
            )
            .map_err(|x| x.field("mat.unit")),
        }
    };
    let name = map.name.clone().unwrap_or_else(|| component.to_string());
    let mut s = FrfSet::zeros(&name, freqs, outputs, inputs, map.out_qty, in_qty);
    s.present = vec![false; s.n_out() * s.n_in()];
    s.data.fill(Complex64::new(f64::NAN, f64::NAN));
    let n_in = s.n_in();
    for (e, &(i, j)) in slots.iter().enumerate() {
        let fac = factor(&s.outputs[i], &s.inputs[j])?;
        s.present[i * n_in + j] = true;
        for k in 0..n {
            // column-major index of line k of stored FRF e
            let idx = match map.layout {
                MatLayout::OutInFreq => i + dims[0] * (j + dims[1] * k),
                MatLayout::FreqOutIn => k + dims[0] * (i + dims[1] * j),
                MatLayout::FreqFrf => k + dims[0] * e,
                MatLayout::FrfFreq => e + dims[0] * k,
            };
            let im = v.im.as_ref().map_or(0.0, |im| im[idx]);
            let mut x = Complex64::new(v.re[idx], im) * fac;
            if map.conjugate {
                x = x.conj();
            }
            if !(x.re.is_finite() && x.im.is_finite()) {
                return Err(Error::numeric(format!(
                    "{} / {} at {} Hz (line {}) is {x} in SI; expected finite values",
                    s.outputs[i],
                    s.inputs[j],
                    s.freqs[k],
                    k + 1
                ))
                .field(frf_field));
            }
            let at = s.idx(k, i, j);
            s.data[at] = x;
        }
    }
    s.signal = signal;
    let mut warnings = Vec::new();
    let missing = s.missing_entries().len();
    if missing > 0 {
        warnings.push(format!(
            "{missing} of {} matrix entries are not in the file and stay missing",
            s.n_out() * s.n_in()
        ));
    }
    s.warnings = warnings.clone();
    Ok((s, warnings))
}
