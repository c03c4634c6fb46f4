//! The settings a command applies to a spec: its flag, else the
//! `catena.yaml` that applies to the spec's folder, else the built-in
//! default, each with where it came from (`check --print-config`).

use std::collections::HashMap;
use std::path::{Path, PathBuf};
use std::sync::Arc;

use crate::analysis::ranges::DEFAULT_MARGIN;
use crate::analysis::report::{DEFAULT_SEED, DEFAULT_TRIALS, MAX_TRIALS};
use crate::config::{self, Config, Set};
use crate::diagnostics::Finding;
use crate::model::DEFAULT_REFERENCE_K;
use crate::units::format::{from_si, trimmed};

/// Every configuration file a run has read, each read once.
#[derive(Default)]
pub struct Configs {
    by_path: HashMap<PathBuf, Arc<Config>>,
    /// The file each folder found, so specs side by side search once.
    by_folder: HashMap<PathBuf, Option<(PathBuf, String)>>,
    /// In the order first needed, for a stable report.
    order: Vec<PathBuf>,
    none: Arc<Config>,
}

impl Configs {
    /// The configuration for a spec in `folder` (an empty one if none
    /// applies).
    pub fn for_folder(&mut self, folder: &Path) -> Arc<Config> {
        let found = self
            .by_folder
            .entry(folder.to_path_buf())
            .or_insert_with(|| config::find(folder))
            .clone();
        let Some((path, shown)) = found else {
            return Arc::clone(&self.none);
        };
        if let Some(c) = self.by_path.get(&path) {
            return Arc::clone(c);
        }
        let loaded = Arc::new(Config::load(&path, &shown));
        self.order.push(path.clone());
        self.by_path.insert(path, Arc::clone(&loaded));
        loaded
    }

    /// What is wrong in the configuration files themselves.
    pub fn findings(&self) -> Vec<Finding> {
        self.order
            .iter()
            .flat_map(|p| self.by_path[p].findings.clone().sorted())
            .collect()
    }
}

/// A value that applies and where it came from.
pub struct Applied<T> {
    pub value: T,
    pub from: String,
}

/// The flag if given, else the configuration's value, else the default.
fn pick<T: Clone>(
    flag: Option<T>,
    flag_name: &str,
    set: Option<&Set<T>>,
    config: &Config,
    default: T,
) -> Applied<T> {
    match (flag, set) {
        (Some(v), _) => Applied {
            value: v,
            from: format!("flag {flag_name}"),
        },
        (None, Some(s)) => Applied {
            value: s.value.clone(),
            from: config.place(s.span),
        },
        (None, None) => Applied {
            value: default,
            from: "default".into(),
        },
    }
}

/// The limit margin, as a fraction of each limit's span: `--margin`
/// (given in %), else `catena.yaml`'s `margin`, else the default.
pub fn margin(flag_percent: Option<f64>, config: &Config) -> Applied<f64> {
    pick(
        flag_percent.map(|m| m / 100.0),
        "--margin",
        config.margin.as_ref(),
        config,
        DEFAULT_MARGIN,
    )
}

/// Monte Carlo trials per point: `--trials`, else `catena.yaml`'s
/// `monte_carlo.trials`, else the default.
pub fn trials(flag: Option<usize>, config: &Config) -> Applied<usize> {
    pick(
        flag,
        "--trials",
        config.trials.as_ref(),
        config,
        DEFAULT_TRIALS,
    )
}

/// The Monte Carlo seed: `--seed`, else `catena.yaml`'s
/// `monte_carlo.seed`, else the default.
pub fn seed(flag: Option<u64>, config: &Config) -> Applied<u64> {
    pick(flag, "--seed", config.seed.as_ref(), config, DEFAULT_SEED)
}

/// `--print-config`: what applies under one configuration, one line each.
pub fn describe(
    config: &Config,
    margin: &Applied<f64>,
    trials: &Applied<usize>,
    seed: &Applied<u64>,
) -> String {
    let mut out = match &config.file {
        Some(f) => format!("configuration: {}\n", f.name()),
        None => {
            "configuration: none (no catena.yaml from here up to the repository's root)\n".into()
        }
    };
    let mut line = |key: &str, value: String, from: &str| {
        out.push_str(&format!("  {key:<20} {value:<24} {from}\n"));
    };
    let kelvin = |t: f64| format!("{} degC", trimmed(from_si(t, "degC"), 6));
    match &config.ambient {
        Some(s) => line(
            "ambient",
            format!("{} .. {}", kelvin(s.value.0), kelvin(s.value.1)),
            &config.place(s.span),
        ),
        None => line(
            "ambient",
            "the reference".into(),
            "default (where a chain states none)",
        ),
    }
    match &config.reference {
        Some(s) => line("reference", kelvin(s.value), &config.place(s.span)),
        None => line(
            "reference",
            kelvin(DEFAULT_REFERENCE_K),
            "default (where a chain states none)",
        ),
    }
    line(
        "margin",
        format!("{} %", trimmed(margin.value * 100.0, 6)),
        &margin.from,
    );
    line("monte_carlo.trials", trials.value.to_string(), &trials.from);
    line("monte_carlo.seed", seed.value.to_string(), &seed.from);
    for s in &config.parts {
        line("parts", s.value.1.clone(), &config.place(s.span));
    }
    for (code, s) in &config.rules {
        line(
            &format!("rules.{}", code.as_str()),
            s.value.as_str().into(),
            &config.place(s.span),
        );
    }
    out
}

/// The sampling flags of the commands that analyse a spec as its
/// configuration says (`budget`, `report`).
#[derive(clap::Args, Clone, Copy, Debug)]
pub struct SamplingArgs {
    /// Monte Carlo trials per point (0: none) [default: catena.yaml's
    /// `monte_carlo.trials`, else 10000].
    #[arg(long)]
    pub trials: Option<usize>,
    /// The Monte Carlo seed: the same seed gives the same result
    /// [default: catena.yaml's `monte_carlo.seed`, else 1].
    #[arg(long)]
    pub seed: Option<u64>,
    /// Points across the measurand range.
    #[arg(long, default_value_t = 21)]
    pub points: usize,
}

impl SamplingArgs {
    /// Whether the flags are in range; the one that is not is reported
    /// on standard error.
    pub fn usable(&self) -> bool {
        if self.trials.is_some_and(|t| t > MAX_TRIALS) {
            errln!("catena: --trials is at most {MAX_TRIALS}");
            return false;
        }
        if !(2..=1001).contains(&self.points) {
            errln!("catena: --points takes 2 to 1001");
            return false;
        }
        true
    }

    /// The analysis options, with the report's detail: flags first, then
    /// `config`, then the defaults.
    pub fn options(&self, config: &Config) -> crate::analysis::report::Options {
        let trials = trials(self.trials, config).value;
        let seed = seed(self.seed, config).value;
        crate::analysis::report::Options {
            budget: crate::analysis::budget::Options {
                points: self.points,
                ..crate::analysis::budget::Options::default()
            },
            trials: (trials > 0).then_some(trials),
            seed,
            detail: true,
        }
    }
}
