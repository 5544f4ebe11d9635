// Shared by the targets: an error must name the file and a place in it
// (line, byte or field); a panic or an unplaced error is a finding.
use mortise::error::{Error, ErrorKind};

pub const FILE: &str = "fuzz-input";

pub fn check<T>(r: Result<T, Error>) {
    if let Err(e) = r {
        assert_eq!(e.file.as_deref(), Some(FILE), "error without its file: {e:?}");
        // a verdict on the whole file (Unsupported) has the file as its place
        assert!(
            e.location.is_some() || e.field.is_some() || e.kind == ErrorKind::Unsupported,
            "error without a place: {e:?}"
        );
        assert!(e.to_string().len() < 4_000, "error message too long: {} bytes", e.to_string().len());
    }
}

/// The column map of sample-frf/wall-to-bed-pressure.csv (as the demo
/// recipe gives it).
#[allow(dead_code)]
pub fn pressure_map() -> mortise::io::csv::ColumnMap {
    let entries: Vec<serde_json::Value> = (1..=4)
        .map(|k| {
            serde_json::json!({
                "out_dof": "room:bed",
                "in_dof": format!("wall:a{k}+X"),
                "values": {"form": "re-im", "re": format!("p_bed_a{k}_re"), "im": format!("p_bed_a{k}_im")}
            })
        })
        .collect();
    let v = serde_json::json!({
        "delimiter": "comma", "skip_rows": 2, "freq": "freq_Hz", "unit": "Pa/N",
        "out_qty": "pressure", "in_qty": "force", "entries": entries
    });
    match mortise::io::csv::map_from_json(v) {
        Ok((m, _)) => m,
        Err(e) => panic!("pressure map: {e}"),
    }
}
