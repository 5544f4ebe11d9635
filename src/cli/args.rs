//! The argument parser: positionals, `--flag`, `--key value`, `--key=value`,
//! `-o value`, and `-h`/`--help`. It accepts exactly the options of the
//! command's table ([`super::spec`]); an option that is not repeatable may be
//! given once.

use super::spec::{Command, HELP_OPT};
use crate::error::{Error, Result};

#[derive(Debug, Clone, Default)]
pub struct Args {
    pub positional: Vec<String>,
    pub options: Vec<(String, Option<String>)>,
    /// `-h` or `--help` was given.
    pub help: bool,
    /// The command whose table the options were checked against.
    command: Option<&'static Command>,
}

fn options_list(cmd: &Command) -> String {
    cmd.options()
        .map(|o| o.spelled())
        .collect::<Vec<_>>()
        .join(" ")
}

impl Args {
    /// Parse `argv` (after the command's name) against `cmd`'s options.
    pub fn parse(argv: &[String], cmd: &'static Command) -> Result<Args> {
        let mut a = Args {
            command: Some(cmd),
            ..Default::default()
        };
        let unknown = |s: &str| {
            Error::usage(format!(
                "unknown option {s} for 'mortise {}'; it takes {}",
                cmd.name,
                options_list(cmd)
            ))
        };
        let mut i = 0;
        while i < argv.len() {
            let s = &argv[i];
            let (name, inline) = if let Some(long) = s.strip_prefix("--") {
                match long.split_once('=') {
                    Some((k, v)) => (k, Some(v)),
                    None => (long, None),
                }
            } else if s.len() > 1 && s.starts_with('-') && s.parse::<f64>().is_err() {
                (&s[1..], None)
            } else {
                a.positional.push(s.clone());
                i += 1;
                continue;
            };
            // -h is --help; a one-letter option is spelled -x, a longer one --name
            let name = if s == "-h" { HELP_OPT.name } else { name };
            let opt = cmd
                .option(name)
                .filter(|o| s == "-h" || o.spelled() == s.split('=').next().unwrap_or(s))
                .ok_or_else(|| unknown(s.split('=').next().unwrap_or(s)))?;
            if opt.name == HELP_OPT.name {
                a.help = true;
                i += 1;
                continue;
            }
            if !opt.repeat && a.options.iter().any(|(k, _)| k == opt.name) {
                return Err(Error::usage(format!(
                    "option {} is given twice; give it once",
                    opt.spelled()
                )));
            }
            let value = if opt.is_flag() {
                if inline.is_some() {
                    return Err(Error::usage(format!(
                        "option {} takes no value",
                        opt.spelled()
                    )));
                }
                None
            } else if let Some(v) = inline {
                Some(v.to_string())
            } else {
                // the next word, unless it is one of this command's options
                let next = argv.get(i + 1).filter(|v| {
                    let bare = v.split('=').next().unwrap_or(v);
                    !(*v == "-h" || cmd.options().any(|o| o.spelled() == bare))
                });
                let Some(v) = next else {
                    return Err(Error::usage(format!(
                        "option {} needs a value ({})",
                        opt.spelled(),
                        opt.value
                    )));
                };
                i += 1;
                Some(v.clone())
            };
            a.options.push((opt.name.to_string(), value));
            i += 1;
        }
        Ok(a)
    }
    /// Debug builds check that the command reads only options of its table.
    fn declared(&self, name: &str) {
        if let Some(c) = self.command {
            debug_assert!(
                c.option(name).is_some(),
                "option '{name}' is read but not in the table of 'mortise {}'",
                c.name
            );
        }
    }
    /// The command's table has option `name` (options shared by some
    /// commands, such as the budget's, are read only where they exist).
    pub fn takes(&self, name: &str) -> bool {
        self.command.map_or(true, |c| c.option(name).is_some())
    }
    pub fn flag(&self, name: &str) -> bool {
        self.declared(name);
        self.options.iter().any(|(k, _)| k == name)
    }
    /// The value given for `name`.
    pub fn value(&self, name: &str) -> Option<&str> {
        self.declared(name);
        self.options
            .iter()
            .rev()
            .find(|(k, _)| k == name)
            .and_then(|(_, v)| v.as_deref())
    }
    /// Every value given for `name`, in order.
    pub fn values(&self, name: &str) -> Vec<&str> {
        self.declared(name);
        self.options
            .iter()
            .filter(|(k, _)| k == name)
            .filter_map(|(_, v)| v.as_deref())
            .collect()
    }
}

#[cfg(test)]
mod tests {
    use super::super::spec::{self, COUPLE, INSPECT};
    use super::*;
    fn v(s: &[&str]) -> Vec<String> {
        s.iter().map(|x| x.to_string()).collect()
    }
    #[test]
    fn parses_forms() {
        let a = Args::parse(
            &v(&[
                "a.uff",
                "--json",
                "-o",
                "out",
                "--join=x=y",
                "--join",
                "p=q",
                "--tsvd",
                "-1e-3",
            ]),
            &COUPLE,
        )
        .unwrap();
        assert_eq!(a.positional, v(&["a.uff"]));
        assert!(a.flag("json"));
        assert_eq!(a.value("o"), Some("out"));
        assert_eq!(a.value("tsvd"), Some("-1e-3"));
        assert_eq!(a.values("join"), vec!["x=y", "p=q"]);
        assert!(!a.help);
        assert!(Args::parse(&v(&["--join"]), &COUPLE).is_err());
    }

    #[test]
    fn refuses_what_the_table_does_not_hold() {
        let e = |argv: &[&str], cmd| Args::parse(&v(argv), cmd).unwrap_err().message;
        assert!(e(&["--colour", "red"], &INSPECT).contains("unknown option --colour"));
        assert!(e(&["--to", "csv"], &INSPECT).contains("unknown option --to"));
        // a one-letter option is -o, never --o; a long one never -name
        assert!(e(&["--o", "x"], &COUPLE).contains("unknown option --o"));
        assert!(e(&["-json"], &INSPECT).contains("unknown option -json"));
        assert!(e(&["-o", "a", "-o", "b"], &COUPLE).contains("-o is given twice"));
        assert!(e(&["--json=yes"], &INSPECT).contains("--json takes no value"));
        assert!(e(&["--tsvd", "--json"], &COUPLE).contains("--tsvd needs a value"));
        assert!(e(&["-o"], &COUPLE).contains("-o needs a value"));
        for h in ["-h", "--help"] {
            assert!(Args::parse(&v(&["x", h]), &COUPLE).unwrap().help);
        }
        // repeatable options keep every value
        let a = Args::parse(&v(&["--re", "2", "--re", "4"]), &spec::CONVERT).unwrap();
        assert_eq!(a.values("re"), vec!["2", "4"]);
    }
}
