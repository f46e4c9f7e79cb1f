//! Raw command-line arguments: `--flag value`, `--flag=value`, bare `--switch`,
//! and positionals. Validation into each command's settings happens in the
//! command's own module.

use anyhow::{Result, bail};

/// Arguments as given, before any meaning is attached.
#[derive(Debug, Default)]
pub struct RawArgs {
    pub positionals: Vec<String>,
    pub options: Vec<(String, Option<String>)>,
}

impl RawArgs {
    /// Splits `args`; `switches` lists the flags that take no value.
    pub fn parse(args: &[String], with_value: &[&str], switches: &[&str]) -> Result<Self> {
        let mut out = RawArgs::default();
        let mut i = 0;
        while i < args.len() {
            let a = &args[i];
            if let Some(flag) = a.strip_prefix("--") {
                let (name, inline) = match flag.split_once('=') {
                    Some((n, v)) => (n.to_string(), Some(v.to_string())),
                    None => (flag.to_string(), None),
                };
                if switches.contains(&name.as_str()) {
                    if inline.is_some() {
                        bail!("--{name} takes no value");
                    }
                    out.options.push((name, None));
                } else if with_value.contains(&name.as_str()) {
                    let value = match inline {
                        Some(v) => v,
                        None => {
                            i += 1;
                            match args.get(i) {
                                Some(v) => v.clone(),
                                None => bail!("--{name} needs a value"),
                            }
                        }
                    };
                    out.options.push((name, Some(value)));
                } else {
                    let mut known: Vec<String> =
                        with_value.iter().chain(switches).map(|s| format!("--{s}")).collect();
                    known.sort();
                    bail!("unknown option --{name}; this command takes: {}", known.join(" "));
                }
            } else {
                out.positionals.push(a.clone());
            }
            i += 1;
        }
        Ok(out)
    }

    /// The last value of a flag, if given.
    pub fn value(&self, name: &str) -> Option<&str> {
        self.options
            .iter()
            .rev()
            .find(|(n, _)| n == name)
            .and_then(|(_, v)| v.as_deref())
    }

    /// Every value of a repeatable flag, in order.
    pub fn values(&self, name: &str) -> Vec<&str> {
        self.options
            .iter()
            .filter(|(n, _)| n == name)
            .filter_map(|(_, v)| v.as_deref())
            .collect()
    }

    pub fn flag(&self, name: &str) -> bool {
        self.options.iter().any(|(n, _)| n == name)
    }

    pub fn required(&self, name: &str) -> Result<&str> {
        match self.value(name) {
            Some(v) => Ok(v),
            None => bail!("--{name} is required"),
        }
    }

    pub fn f64_value(&self, name: &str) -> Result<Option<f64>> {
        match self.value(name) {
            None => Ok(None),
            Some(v) => match v.trim().parse::<f64>() {
                Ok(x) if x.is_finite() => Ok(Some(x)),
                _ => bail!("--{name}: {v:?} is not a finite number"),
            },
        }
    }
}
