//! The provenance chain in ID lines 3-5 of a dataset: [`provenance_lines`]
//! writes it, [`provenance_from_lines`] reads it back; other ID text is
//! ignored.

use crate::frf::Provenance;

/// The provenance chain as ID-line text, two lines an entry:
/// `from <format> <file>` and `sha256 <hex>` (file names cut to fit 80
/// columns). The writer spreads the lines over ID lines 3-5 of a set's
/// datasets (three per dataset, in order); a chain longer than that keeps
/// its first entries.
pub fn provenance_lines(prov: &[Provenance]) -> Vec<String> {
    let mut v = Vec::new();
    for p in prov {
        let fmt = if p.format.trim().is_empty() || p.format.contains(char::is_whitespace) {
            "-"
        } else {
            p.format.as_str()
        };
        let head = format!("from {fmt} ");
        let room = 80 - head.len().min(80);
        let name: String = p
            .file
            .chars()
            .map(|c| if c.is_control() { ' ' } else { c })
            .take(room)
            .collect();
        v.push(format!("{head}{}", name.trim()));
        let sha = if p.sha256.len() == 64 && p.sha256.chars().all(|c| c.is_ascii_hexdigit()) {
            p.sha256.as_str()
        } else {
            "-"
        };
        v.push(format!("sha256 {sha}"));
    }
    v
}

/// Read back what [`provenance_lines`] wrote; other ID text is ignored.
pub fn provenance_from_lines(lines: &[&str]) -> Vec<Provenance> {
    let mut v = Vec::new();
    let mut k = 0;
    while k + 1 < lines.len() {
        let a = lines[k].trim();
        let b = lines[k + 1].trim();
        if let (Some(rest), Some(sha)) = (a.strip_prefix("from "), b.strip_prefix("sha256 ")) {
            if let Some((fmt, file)) = rest.split_once(' ') {
                let sha = sha.trim();
                let ok =
                    sha == "-" || (sha.len() == 64 && sha.chars().all(|c| c.is_ascii_hexdigit()));
                if ok && !file.trim().is_empty() {
                    v.push(Provenance {
                        file: file.trim().to_string(),
                        sha256: if sha == "-" {
                            String::new()
                        } else {
                            sha.to_string()
                        },
                        format: if fmt == "-" {
                            String::new()
                        } else {
                            fmt.to_string()
                        },
                        options: String::new(),
                    });
                    k += 2;
                    continue;
                }
            }
        }
        k += 1;
    }
    v
}
