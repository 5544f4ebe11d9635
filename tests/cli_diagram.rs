//! `mortise diagram`: the SVG it writes is what the library draws, is
//! well-formed XML by an independent parser (Python's xml.etree), carries one
//! group per item with the item's box, and shows hostile names as text.
//! Errors name the file and exit as the CLI's contract says.

mod cli_support;
mod common;

use cli_support::mortise;
use mortise::plot::assembly_svg;
use mortise::recipe;
use std::path::{Path, PathBuf};

fn root() -> PathBuf {
    PathBuf::from(env!("CARGO_MANIFEST_DIR"))
}

/// The SVG file read by Python's xml.etree (tests/py/svg_items.py).
fn read_svg(path: &Path) -> serde_json::Value {
    let out = common::run_py("svg_items.py", &[path.to_str().unwrap()]);
    serde_json::from_str(&out).unwrap()
}

/// The groups Python found are the items the library gives, box for box.
fn same_items(py: &serde_json::Value, d: &mortise::plot::Diagram) {
    let groups = py["items"].as_array().unwrap();
    assert_eq!(groups.len(), d.items.len());
    for (g, it) in groups.iter().zip(&d.items) {
        assert_eq!(g["kind"], it.kind);
        assert_eq!(g["id"], it.id.as_str());
        assert_eq!(g["step"].as_str(), it.step.as_deref());
        assert_eq!(g["index"].as_u64(), it.index.map(|i| i as u64));
        let b: Vec<f64> = g["box"]
            .as_array()
            .unwrap()
            .iter()
            .map(|v| v.as_f64().unwrap())
            .collect();
        for (got, want) in b.iter().zip([it.x, it.y, it.w, it.h]) {
            assert!((got - want).abs() <= 0.05, "{}: {b:?}", it.id);
        }
    }
    assert_eq!(py["width"].as_f64(), Some(d.width));
    assert_eq!(py["height"].as_f64(), Some(d.height));
}

#[test]
fn the_demo_recipe_drawn_by_the_cli() {
    let d = common::scratch("cli_diagram_demo");
    let recipe_path = root().join("sample-frf/heat-pump.recipe.json");
    let out = d.join("assembly.svg");
    let r = mortise(
        &d,
        &[
            "diagram",
            recipe_path.to_str().unwrap(),
            "-o",
            out.to_str().unwrap(),
        ],
    );
    assert_eq!((r.code, r.stderr.as_str()), (0, ""));
    assert!(
        r.stdout
            .contains("6 component(s), 8 step(s), 8 joint(s) drawn"),
        "{}",
        r.stdout
    );
    // the file is the library's drawing of the same recipe
    let text = std::fs::read_to_string(&recipe_path).unwrap();
    let lib = assembly_svg(&recipe::parse(&text).unwrap()).unwrap();
    let written = std::fs::read_to_string(&out).unwrap();
    assert_eq!(written, format!("{}\n", lib.svg));
    // without -o it goes to standard output
    let r = mortise(&d, &["diagram", recipe_path.to_str().unwrap()]);
    assert_eq!(r.code, 0);
    assert_eq!(r.stdout, written);

    let py = read_svg(&out);
    same_items(&py, &lib);
    // every joint's group holds its two DOF labels and its type
    let v: serde_json::Value = serde_json::from_str(&text).unwrap();
    for (i, j) in v["steps"][0]["joints"]
        .as_array()
        .unwrap()
        .iter()
        .enumerate()
    {
        let g = py["items"]
            .as_array()
            .unwrap()
            .iter()
            .find(|g| g["kind"] == "joint" && g["index"] == i)
            .unwrap();
        let texts: Vec<&str> = g["texts"]
            .as_array()
            .unwrap()
            .iter()
            .map(|t| t.as_str().unwrap())
            .collect();
        let ty = j["type"].as_str().unwrap();
        assert!(texts.contains(&j["a"].as_str().unwrap()), "{texts:?}");
        assert!(texts.contains(&j["b"].as_str().unwrap()), "{texts:?}");
        assert!(texts.iter().any(|t| t.starts_with(ty)), "{texts:?}");
    }
    // and every component's group its name
    for name in v["components"].as_object().unwrap().keys() {
        let g = py["items"]
            .as_array()
            .unwrap()
            .iter()
            .find(|g| g["kind"] == "component" && g["id"] == name.as_str())
            .unwrap();
        assert!(g["texts"].as_array().unwrap().iter().any(|t| t == name));
    }
}

#[test]
fn hostile_names_survive_an_xml_parser() {
    let d = common::scratch("cli_diagram_hostile");
    let name = "a<&\"'>b";
    let text = serde_json::json!({
        "format": "mortise-recipe", "version": 1, "title": "]]> <!-- & -->",
        "components": {name: {"file": "x<y>.uff", "note": "</text></svg><script>x</script>\u{1}"}, "B": {"file": "b.uff"}},
        "steps": [{"id": "s&<>", "op": "couple", "parts": [name, "B"],
                   "joints": [{"a": format!("{name}:1+X"), "b": "B:1+X", "k": 1e5, "eta": 0.1}]}],
        "variants": [{"name": "v\"<", "drop_joints": ["s&<>#0"]}],
        "outputs": ["s&<>"]
    })
    .to_string();
    let rp = d.join("hostile.recipe.json");
    std::fs::write(&rp, &text).unwrap();
    let out = d.join("h.svg");
    let r = mortise(
        &d,
        &["diagram", rp.to_str().unwrap(), "-o", out.to_str().unwrap()],
    );
    assert_eq!((r.code, r.stderr.as_str()), (0, ""));
    let py = read_svg(&out);
    let lib = assembly_svg(&recipe::parse(&text).unwrap()).unwrap();
    same_items(&py, &lib);
    let texts: Vec<&str> = py["texts"]
        .as_array()
        .unwrap()
        .iter()
        .map(|t| t.as_str().unwrap())
        .collect();
    assert!(texts.contains(&name), "{texts:?}");
    assert!(texts.contains(&"file x<y>.uff"), "{texts:?}");
    assert!(
        texts.contains(&"hysteretic k = 1.0e5 N/m, η = 0.1 — left out in 'v\"<'"),
        "{texts:?}"
    );
    assert!(texts.iter().any(|t| t.contains("</svg><script>x</script>")));
    assert!(py["items"]
        .as_array()
        .unwrap()
        .iter()
        .any(|g| g["kind"] == "component" && g["id"] == name));
    assert!(py["items"]
        .as_array()
        .unwrap()
        .iter()
        .any(|g| g["kind"] == "joint" && g["id"] == "s&<>#0" && g["step"] == "s&<>"));
}

#[test]
fn refusals_name_the_file_and_exit_as_documented() {
    let d = common::scratch("cli_diagram_errors");
    // a recipe the core refuses: exit 1, the file and the entry named
    let bad = d.join("bad.recipe.json");
    std::fs::write(
        &bad,
        r#"{"format":"mortise-recipe","version":1,"components":{"A":{"file":"a.uff"}},
            "steps":[{"id":"s","op":"scale","from":"Q","factor":2}],"outputs":["s"]}"#,
    )
    .unwrap();
    let out = d.join("bad.svg");
    let r = mortise(
        &d,
        &[
            "diagram",
            bad.to_str().unwrap(),
            "-o",
            out.to_str().unwrap(),
        ],
    );
    assert_eq!(r.code, 1, "{}", r.stderr);
    assert!(r.stderr.contains("bad.recipe.json"), "{}", r.stderr);
    assert!(r.stderr.contains("'Q' is not a component"), "{}", r.stderr);
    assert!(!out.exists(), "nothing written for a refused recipe");
    // not UTF-8
    let bin = d.join("bin.json");
    std::fs::write(&bin, b"{\"format\": \"\xff\"}").unwrap();
    let r = mortise(&d, &["diagram", bin.to_str().unwrap()]);
    assert_eq!(r.code, 1);
    assert!(
        r.stderr.contains("UTF-8") && r.stderr.contains("byte 12"),
        "{}",
        r.stderr
    );
    // the command line: no operand, two operands, an unknown option
    for argv in [
        vec!["diagram"],
        vec!["diagram", "a.json", "b.json"],
        vec!["diagram", "a.json", "--json"],
    ] {
        let r = mortise(&d, &argv);
        assert_eq!(r.code, 2, "{argv:?}: {}", r.stderr);
        assert!(r.stderr.contains("mortise help diagram"), "{}", r.stderr);
    }
    // a file that is missing
    let r = mortise(&d, &["diagram", "missing.recipe.json"]);
    assert_eq!(r.code, 1);
    assert!(r.stderr.contains("missing.recipe.json"), "{}", r.stderr);
    // listed in the general help
    let h = mortise(&d, &["help"]).stdout;
    assert!(h.contains("  diagram   draw the assembly"), "{h}");
}
