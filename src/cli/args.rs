//! A small argument parser: positionals, `--flag`, `--key value`,
//! `--key=value`, `-o value`; repeated keys keep every value.

use crate::error::{Error, Result};

#[derive(Debug, Clone, Default)]
pub struct Args {
    pub positional: Vec<String>,
    pub options: Vec<(String, Option<String>)>,
}

/// Options that never take a value.
const FLAGS: &[&str] = &["json", "help", "quiet", "force", "no-raw", "check"];

impl Args {
    pub fn parse(argv: &[String]) -> Result<Args> {
        let mut a = Args::default();
        let mut i = 0;
        while i < argv.len() {
            let s = &argv[i];
            if let Some(name) = s.strip_prefix("--") {
                if let Some((k, v)) = name.split_once('=') {
                    a.options.push((k.to_string(), Some(v.to_string())));
                } else if FLAGS.contains(&name) {
                    a.options.push((name.to_string(), None));
                } else if i + 1 < argv.len() {
                    a.options
                        .push((name.to_string(), Some(argv[i + 1].clone())));
                    i += 1;
                } else {
                    return Err(Error::usage(format!("option --{name} needs a value")));
                }
            } else if s == "-o" {
                let v = argv
                    .get(i + 1)
                    .ok_or_else(|| Error::usage("option -o needs a value"))?;
                a.options.push(("o".into(), Some(v.clone())));
                i += 1;
            } else {
                a.positional.push(s.clone());
            }
            i += 1;
        }
        Ok(a)
    }
    pub fn flag(&self, name: &str) -> bool {
        self.options.iter().any(|(k, _)| k == name)
    }
    /// The last value given for `name`.
    pub fn value(&self, name: &str) -> Option<&str> {
        self.options
            .iter()
            .rev()
            .find(|(k, _)| k == name)
            .and_then(|(_, v)| v.as_deref())
    }
    /// Every value given for `name`, in order.
    pub fn values(&self, name: &str) -> Vec<&str> {
        self.options
            .iter()
            .filter(|(k, _)| k == name)
            .filter_map(|(_, v)| v.as_deref())
            .collect()
    }
    /// Error for any option not in `known`.
    pub fn only(&self, known: &[&str]) -> Result<()> {
        for (k, _) in &self.options {
            if !known.contains(&k.as_str()) {
                return Err(Error::usage(format!(
                    "unknown option --{k}; this command takes {}",
                    known
                        .iter()
                        .map(|k| format!("--{k}"))
                        .collect::<Vec<_>>()
                        .join(" ")
                )));
            }
        }
        Ok(())
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    fn v(s: &[&str]) -> Vec<String> {
        s.iter().map(|x| x.to_string()).collect()
    }
    #[test]
    fn parses_forms() {
        let a = Args::parse(&v(&[
            "a.uff",
            "--json",
            "--to",
            "csv",
            "-o",
            "out",
            "--join=x=y",
            "--join",
            "p=q",
        ]))
        .unwrap();
        assert_eq!(a.positional, v(&["a.uff"]));
        assert!(a.flag("json"));
        assert_eq!(a.value("to"), Some("csv"));
        assert_eq!(a.value("o"), Some("out"));
        assert_eq!(a.values("join"), vec!["x=y", "p=q"]);
        assert!(Args::parse(&v(&["--to"])).is_err());
    }
}
