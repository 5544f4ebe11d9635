//! Speed benchmark of sweeps and of a recipe Monte Carlo on the demo
//! scenario (invented data, src/demo.rs): a Monte Carlo of DRAWS draws (1 %
//! relative uncertainty on the casing), a POINTS-point sweep of the isolator
//! stiffness (a scale factor: every point re-runs every step) and a
//! POINTS-point speed sweep (orders 1–3 at the four seats through
//! `seat_to_anchor`, 10 to 300 rev/s: the transfer is computed once), each
//! on 2 threads. Prints the time per draw or point against a single run of
//! the demo's steps, and the ratio of the whole time to (single × N / 2
//! cores); 1.0 would be a perfect split with no overhead.
//!
//! The single run is the time one more point adds to a sweep on one thread:
//! (t(21 points) − t(1 point)) / 20, so loading the files is left out.
//!
//! Run: `cargo run --profile bench-native --example bench_sweep [DRAWS] [POINTS]`
//! (defaults 1000 and 200).

use mortise::limits::Limits;
use mortise::recipe::{self, MapSource};
use mortise::uncertainty::McOptions;
use std::time::Instant;

fn main() -> mortise::Result<()> {
    let mut args = std::env::args().skip(1);
    let draws: usize = args.next().and_then(|a| a.parse().ok()).unwrap_or(1000);
    let points: usize = args.next().and_then(|a| a.parse().ok()).unwrap_or(200);
    let mut src = MapSource::default();
    let mut base = serde_json::Value::Null;
    for (n, b) in mortise::demo_files::files()? {
        if n.ends_with(".recipe.json") {
            base =
                serde_json::from_slice(&b).map_err(|e| mortise::Error::internal(e.to_string()))?;
        }
        src.0.insert(n, b);
    }
    base.as_object_mut().map(|o| o.remove("variants"));
    let lim = Limits::default();
    let parse = |v: &serde_json::Value| recipe::parse(&v.to_string());

    // a single run: the time one more point adds to a sweep on one thread,
    // (t(21 points) − t(1 point)) / 20, best of 3 (loading the components and
    // the baseline left out)
    let timed = |steps: usize, threads: usize| -> mortise::Result<f64> {
        let mut r = base.clone();
        r["sweep"] =
            serde_json::json!({"scale": "isolator", "from": 0.5, "to": 2.0, "steps": steps.max(2)});
        if steps == 1 {
            r["sweep"] = serde_json::json!({"scale": "isolator", "values": [1.0]});
        }
        let r = parse(&r)?;
        let t = Instant::now();
        recipe::run_sweep(&r, &src, &lim, None, threads)?;
        Ok(t.elapsed().as_secs_f64())
    };
    let mut single = f64::INFINITY;
    for _ in 0..3 {
        single = single.min((timed(21, 1)? - timed(1, 1)?) / 20.0);
    }
    println!(
        "single run of the demo's steps: {:.1} ms (one more point of a sweep on one thread, best of 3)",
        single * 1e3
    );
    let report = |what: &str, n: usize, secs: f64| {
        println!(
            "{what}: {n} in {secs:.2} s on 2 threads, {:.2} ms each ({:.2}× a single run); ratio to single × N / 2 cores: {:.2}",
            secs / n as f64 * 1e3,
            secs / n as f64 / single,
            secs / (single * n as f64 / 2.0)
        );
    };

    let mut mc = base.clone();
    mc["components"]["casing"]["uncertainty"] = serde_json::json!({"relative": 0.01});
    let rmc = parse(&mc)?;
    let t = Instant::now();
    recipe::monte_carlo_draws(&rmc, &src, &lim, McOptions { draws, seed: 1 }, None, 2)?;
    report("Monte Carlo draws", draws, t.elapsed().as_secs_f64());

    let mut sw = base.clone();
    sw["sweep"] = serde_json::json!({"scale": "isolator", "from": 0.25, "to": 4.0,
        "steps": points, "spacing": "log"});
    let rsw = parse(&sw)?;
    let t = Instant::now();
    recipe::run_sweep(&rsw, &src, &lim, None, 1)?;
    println!(
        "isolator sweep points on 1 thread: {points} in {:.2} s",
        t.elapsed().as_secs_f64()
    );
    let t = Instant::now();
    recipe::run_sweep(&rsw, &src, &lim, None, 2)?;
    report("isolator sweep points", points, t.elapsed().as_secs_f64());

    let mut orders = Vec::new();
    for seat in ["101", "102", "103", "104"] {
        for (k, a) in [(1.0, 2.0), (2.0, 0.8), (3.0, 0.3)] {
            orders.push(serde_json::json!({"dof": format!("casing:{seat}+Z"), "order": k, "re": a, "im": 0.0}));
        }
    }
    let mut sp = base.clone();
    sp["sweep"] = serde_json::json!({"speed": {"frf": "seat_to_anchor", "orders": orders},
        "from": 10.0, "to": 300.0, "steps": points});
    let rsp = parse(&sp)?;
    let t = Instant::now();
    recipe::run_sweep(&rsp, &src, &lim, None, 2)?;
    report("speed sweep points", points, t.elapsed().as_secs_f64());
    Ok(())
}
