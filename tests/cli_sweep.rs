//! `mortise sweep` and `mortise merge` through the binary: four shards run
//! in parallel by `xargs -P 4` (as a workstation would run them), merged, and
//! compared byte for byte with the unsharded run (with `cmp`, the POSIX
//! byte comparison). The demo data are invented (src/demo.rs).

mod common;

use std::path::{Path, PathBuf};
use std::process::Command;

const BIN: &str = env!("CARGO_BIN_EXE_mortise");

fn mortise(args: &[&str]) -> (i32, String, String) {
    let o = Command::new(BIN).args(args).output().unwrap();
    (
        o.status.code().unwrap_or(-1),
        String::from_utf8_lossy(&o.stdout).into_owned(),
        String::from_utf8_lossy(&o.stderr).into_owned(),
    )
}

/// The demo's files in `dir` and its recipe with an isolator sweep as
/// `NAME.recipe.json`; the recipe's path.
fn demo_with_sweep(dir: &Path, name: &str, title: &str) -> PathBuf {
    let (code, _, err) = mortise(&["demo", "-o", dir.to_str().unwrap()]);
    assert_eq!(code, 0, "{err}");
    let text = std::fs::read_to_string(dir.join("heat-pump.recipe.json")).unwrap();
    let mut r: serde_json::Value = serde_json::from_str(&text).unwrap();
    r["title"] = title.into();
    r["sweep"] = serde_json::json!({"name": "isolator stiffness", "scale": "isolator",
        "from": 0.25, "to": 4.0, "steps": 9, "spacing": "log"});
    let p = dir.join(format!("{name}.recipe.json"));
    std::fs::write(&p, serde_json::to_string_pretty(&r).unwrap()).unwrap();
    p
}

#[test]
fn shards_run_by_xargs_merge_into_the_unsharded_file() {
    let d = common::scratch("cli_sweep_shards");
    let recipe = demo_with_sweep(&d.join("in"), "iso", "isolator sweep");
    let whole = d.join("whole");
    let (code, out, err) = mortise(&[
        "sweep",
        recipe.to_str().unwrap(),
        "-o",
        whole.to_str().unwrap(),
    ]);
    assert_eq!(code, 0, "{err}");
    assert!(out.contains("points 0..9 of 9"), "{out}");
    // four shards at once, one thread each
    let script = format!(
        "printf '1\\n2\\n3\\n4\\n' | xargs -P 4 -I K '{BIN}' sweep '{}' --shard K/4 --threads 1 -o '{}/shard-K'",
        recipe.display(),
        d.display()
    );
    let st = Command::new("sh").arg("-c").arg(&script).status().unwrap();
    assert!(st.success(), "{script}");
    let dirs: Vec<String> = (1..=4)
        .map(|k| d.join(format!("shard-{k}")).display().to_string())
        .collect();
    let merged = d.join("merged");
    let mut args = vec!["merge"];
    // in another order than the slices: merge sorts them
    args.extend([&dirs[2], &dirs[0], &dirs[3], &dirs[1]].map(String::as_str));
    args.extend(["-o", merged.to_str().unwrap()]);
    let (code, out, err) = mortise(&args);
    assert_eq!(code, 0, "{err}");
    assert!(out.contains("merged 4 shard(s)"), "{out}");
    let file = "isolator_stiffness.sweep.csv";
    let cmp = Command::new("cmp")
        .arg(whole.join(file))
        .arg(merged.join(file))
        .status()
        .unwrap();
    assert!(
        cmp.success(),
        "cmp: the merged file differs from the unsharded one"
    );
    // each shard records its slice and the recipe's SHA-256 (sha256sum's digest)
    let sha = Command::new("sha256sum").arg(&recipe).output().unwrap();
    let sha = String::from_utf8_lossy(&sha.stdout)
        .split_whitespace()
        .next()
        .unwrap()
        .to_string();
    let s2 = std::fs::read_to_string(Path::new(&dirs[1]).join(file)).unwrap();
    assert!(s2.starts_with("# mortise-sweep 1\n"), "{s2}");
    assert!(s2.contains(&format!("# recipe sha256: {sha}\n")), "{s2}");
    assert!(s2.contains("# points: 2..4 of 9\n"), "{s2}");
    // `mortise run` writes the same file beside its outputs
    let run = d.join("run");
    let (code, out, err) = mortise(&["run", recipe.to_str().unwrap(), "-o", run.to_str().unwrap()]);
    assert_eq!(code, 0, "{err}");
    assert!(out.contains("sweep 'isolator stiffness'"), "{out}");
    assert_eq!(
        std::fs::read(run.join(file)).unwrap(),
        std::fs::read(whole.join(file)).unwrap()
    );
    // the point at factor 1 is the demo's baseline, 43.2 dB(A) at the bed
    let w = std::fs::read_to_string(whole.join(file)).unwrap();
    let row4: Vec<&str> = w.lines().nth(10).unwrap().split(',').collect();
    assert_eq!(row4[..2], ["4", "1"]);
    let bed: f64 = row4.last().unwrap().parse().unwrap();
    assert!((bed - 43.2).abs() < 0.05, "{bed}");

    // refused: a missing slice, an overlap, another recipe, bad shards
    let (code, _, err) = mortise(&["merge", &dirs[0], &dirs[1], &dirs[3], "-o", "x"]);
    assert_eq!(code, 1, "{err}");
    assert!(err.contains("points 4..6 are missing"), "{err}");
    let (code, _, err) = mortise(&["merge", &dirs[0], &dirs[1], &dirs[1], "-o", "x"]);
    assert_eq!(code, 1, "{err}");
    assert!(err.contains("overlap"), "{err}");
    let other = demo_with_sweep(&d.join("in"), "other", "another title");
    let o4 = d.join("other-4");
    let (code, _, err) = mortise(&[
        "sweep",
        other.to_str().unwrap(),
        "--shard",
        "4/4",
        "-o",
        o4.to_str().unwrap(),
    ]);
    assert_eq!(code, 0, "{err}");
    let (code, _, err) = mortise(&[
        "merge",
        &dirs[0],
        &dirs[1],
        &dirs[2],
        o4.to_str().unwrap(),
        "-o",
        "x",
    ]);
    assert_eq!(code, 1, "{err}");
    assert!(
        err.contains(&sha) && err.contains("different recipes"),
        "{err}"
    );
    for bad in ["5/4", "0/4", "1/0", "a/b"] {
        let (code, _, err) =
            mortise(&["sweep", recipe.to_str().unwrap(), "--shard", bad, "-o", "x"]);
        assert_eq!(code, 2, "{bad}: {err}");
        assert!(err.contains("--shard"), "{err}");
    }
}

#[test]
fn monte_carlo_draws_shard_and_merge_like_a_sweep() {
    let d = common::scratch("cli_sweep_mc");
    let input = d.join("in");
    let (code, _, err) = mortise(&["demo", "-o", input.to_str().unwrap()]);
    assert_eq!(code, 0, "{err}");
    let text = std::fs::read_to_string(input.join("heat-pump.recipe.json")).unwrap();
    let mut r: serde_json::Value = serde_json::from_str(&text).unwrap();
    r["components"]["casing"]["uncertainty"] = serde_json::json!({"relative": 0.02});
    let recipe = input.join("mc.recipe.json");
    std::fs::write(&recipe, r.to_string()).unwrap();
    let rp = recipe.to_str().unwrap();
    let whole = d.join("whole");
    let (code, _, err) = mortise(&[
        "sweep",
        rp,
        "--monte-carlo",
        "5",
        "--seed",
        "3",
        "-o",
        whole.to_str().unwrap(),
    ]);
    assert_eq!(code, 0, "{err}");
    let mut dirs = Vec::new();
    for k in 1..=2 {
        let o = d.join(format!("s{k}"));
        let shard = format!("{k}/2");
        let (code, _, err) = mortise(&[
            "sweep",
            rp,
            "--monte-carlo",
            "5",
            "--seed",
            "3",
            "--shard",
            &shard,
            "-o",
            o.to_str().unwrap(),
        ]);
        assert_eq!(code, 0, "{err}");
        dirs.push(o.display().to_string());
    }
    let merged = d.join("merged");
    let (code, _, err) = mortise(&["merge", &dirs[1], &dirs[0], "-o", merged.to_str().unwrap()]);
    assert_eq!(code, 0, "{err}");
    let file = "monte-carlo.sweep.csv";
    let cmp = Command::new("cmp")
        .arg(whole.join(file))
        .arg(merged.join(file))
        .status()
        .unwrap();
    assert!(cmp.success());
    // another seed is another run: its rows differ from seed 3's
    let other = d.join("seed4");
    let (code, _, err) = mortise(&[
        "sweep",
        rp,
        "--monte-carlo",
        "5",
        "--seed",
        "4",
        "-o",
        other.to_str().unwrap(),
    ]);
    assert_eq!(code, 0, "{err}");
    let a = std::fs::read_to_string(whole.join(file)).unwrap();
    let b = std::fs::read_to_string(other.join(file)).unwrap();
    assert_ne!(a.lines().nth(6), b.lines().nth(6));
    // N = 0 or 1 draws is refused
    let (code, _, err) = mortise(&["sweep", rp, "--monte-carlo", "0", "-o", "x"]);
    assert_eq!(code, 2, "{err}");
    assert!(err.contains("--monte-carlo '0'"), "{err}");
}
