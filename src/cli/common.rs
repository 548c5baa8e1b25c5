//! Small helpers shared by the subcommands: parsing of compound options.

use seine::sky::observer::Site;
use seine::{Error, Result};

/// Parse `LON_DEG,LAT_DEG[,ELEV_M]` into a site.
pub fn parse_site(s: &str) -> Result<Site> {
    let parts: Vec<&str> = s.split(',').map(str::trim).collect();
    let num = |i: usize, what: &str| -> Result<f64> {
        parts
            .get(i)
            .and_then(|p| p.parse::<f64>().ok())
            .filter(|x| x.is_finite())
            .ok_or_else(|| {
                Error::input(format!(
                    "--site `{s}`: expected LON_DEG,LAT_DEG[,ELEV_M] with a number for {what}"
                ))
            })
    };
    if !(2..=3).contains(&parts.len()) {
        return Err(Error::input(format!("--site `{s}`: expected LON_DEG,LAT_DEG[,ELEV_M]")));
    }
    let site = Site {
        longitude_deg: num(0, "the longitude")?,
        latitude_deg: num(1, "the latitude")?,
        elevation_m: if parts.len() == 3 {
            num(2, "the elevation")?
        } else {
            0.0
        },
    };
    if let Some(p) = site.problem() {
        return Err(Error::input(format!("--site: {p}")));
    }
    Ok(site)
}

/// Parse `K/N` (K from 0 to N − 1).
pub fn parse_shard(s: &str) -> Result<(usize, usize)> {
    let bad = || Error::input(format!("--shard `{s}`: expected K/N with 0 ≤ K < N, e.g. 0/4"));
    let (k, n) = s.split_once('/').ok_or_else(bad)?;
    let (k, n): (usize, usize) = (
        k.trim().parse().map_err(|_| bad())?,
        n.trim().parse().map_err(|_| bad())?,
    );
    if n == 0 || k >= n {
        return Err(bad());
    }
    Ok((k, n))
}

/// `--shard K/N`, `--shards N` and the Slurm array variables: one script line serves every
/// task of a job array. Flatten this into a subcommand's arguments and call `resolve`.
#[derive(clap::Args, Debug, Clone, Default)]
pub struct ShardArgs {
    /// Take shard K of N (K from 0): a contiguous, disjoint slice of the objects. Without it,
    /// K comes from SLURM_ARRAY_TASK_ID when that is set (see --shards).
    #[arg(long)]
    pub shard: Option<String>,
    /// With SLURM_ARRAY_TASK_ID: the number of shards N (default: SLURM_ARRAY_TASK_COUNT).
    /// Give it when resubmitting single tasks, whose array is smaller than N.
    #[arg(long)]
    pub shards: Option<usize>,
}

impl ShardArgs {
    /// The shard (k, n) to take, or none for the whole input.
    pub fn resolve(&self) -> Result<Option<(usize, usize)>> {
        let var = |name: &str| std::env::var(name).ok().filter(|v| !v.trim().is_empty());
        shard_from(
            self.shard.as_deref(),
            self.shards,
            var("SLURM_ARRAY_TASK_ID").as_deref(),
            var("SLURM_ARRAY_TASK_COUNT").as_deref(),
        )
    }
}

/// The rule of `ShardArgs::resolve`, with the environment passed in: `--shard` wins (and
/// must agree with `--shards`); otherwise a Slurm task id gives K, and `--shards` or the
/// task count gives N.
pub fn shard_from(
    shard: Option<&str>,
    shards: Option<usize>,
    task_id: Option<&str>,
    task_count: Option<&str>,
) -> Result<Option<(usize, usize)>> {
    if shards == Some(0) {
        return Err(Error::input("--shards: expected at least 1"));
    }
    if let Some(s) = shard {
        let (k, n) = parse_shard(s)?;
        if shards.is_some_and(|m| m != n) {
            return Err(Error::input(format!(
                "--shard {s} and --shards {}: the shard counts differ; give one of them",
                shards.unwrap_or(0)
            )));
        }
        return Ok(Some((k, n)));
    }
    let Some(id) = task_id else {
        if shards.is_some() {
            return Err(Error::input(
                "--shards: needs SLURM_ARRAY_TASK_ID in the environment (or use --shard K/N)",
            ));
        }
        return Ok(None);
    };
    let k: usize = id
        .trim()
        .parse()
        .map_err(|_| Error::input(format!("SLURM_ARRAY_TASK_ID `{id}`: expected a task index 0, 1, 2, …")))?;
    let n = match (shards, task_count) {
        (Some(n), _) => n,
        (None, Some(c)) => c
            .trim()
            .parse()
            .map_err(|_| Error::input(format!("SLURM_ARRAY_TASK_COUNT `{c}`: expected a number of tasks")))?,
        (None, None) => {
            return Err(Error::input(
                "SLURM_ARRAY_TASK_ID is set but not SLURM_ARRAY_TASK_COUNT: give --shards N",
            ));
        }
    };
    if k >= n {
        return Err(Error::input(format!(
            "SLURM_ARRAY_TASK_ID = {k} with {n} shards: expected an index below {n} \
             (submit --array=0-{} and pass --shards {n})",
            n.saturating_sub(1)
        )));
    }
    Ok(Some((k, n)))
}

/// A flag raised by the first SIGINT or SIGTERM (a batch scheduler's preemption), so that a
/// long run stops cleanly after the chunk in flight; a second signal ends the process at once,
/// removing its temporaries (`seine::interrupt`).
pub fn stop_flag() -> Result<std::sync::Arc<std::sync::atomic::AtomicBool>> {
    seine::interrupt::graceful_stop()
}

/// `--format parquet|csv` of an output directory's tables.
pub fn parse_format(s: &str) -> Result<seine::io::table::Format> {
    use seine::io::table::Format;
    match s {
        "parquet" => Ok(Format::Parquet),
        "csv" => Ok(Format::Csv),
        other => Err(Error::input(format!("--format `{other}`: expected parquet or csv"))),
    }
}

/// Size the worker pool; results never depend on it.
pub fn set_threads(threads: Option<usize>) -> Result<()> {
    if let Some(n) = threads {
        if n == 0 {
            return Err(Error::input("--threads: expected at least 1"));
        }
        rayon::ThreadPoolBuilder::new()
            .num_threads(n)
            .build_global()
            .map_err(|e| Error::io(e.to_string()))?;
    }
    Ok(())
}

/// Survey names label output columns and rows; two surveys may not share one.
pub fn check_unique_survey_names(surveys: &[seine::engine::PreparedSurvey]) -> Result<()> {
    let mut seen = std::collections::HashSet::new();
    for s in surveys {
        let key = seine::engine::run::survey_key(&s.survey.name);
        if !seen.insert(key.clone()) {
            return Err(Error::input(format!(
                "{}: survey name `{}` is already used by another --survey; names must differ",
                s.survey.spec_path.display(),
                s.survey.name
            )));
        }
    }
    Ok(())
}

/// Load and prepare every `--survey`, recording each spec in the provenance.
pub fn load_surveys(
    paths: &[std::path::PathBuf],
    prov: &mut seine::io::Provenance,
) -> Result<Vec<seine::engine::PreparedSurvey>> {
    let mut surveys = Vec::new();
    for path in paths {
        let s = seine::survey::Survey::load(path)?;
        prov.add_input(path)?;
        surveys.push(seine::engine::PreparedSurvey::new(s));
    }
    check_unique_survey_names(&surveys)?;
    Ok(surveys)
}

pub use seine::io::out_dir::{OutDir, col};

/// Comma-separated increasing bin edges for `option`.
pub fn parse_edges(option: &str, s: &str) -> Result<Vec<f64>> {
    let v: Vec<f64> = s
        .split(',')
        .map(|x| x.trim().parse::<f64>())
        .collect::<std::result::Result<_, _>>()
        .map_err(|_| Error::input(format!("{option} `{s}`: expected comma-separated numbers")))?;
    if v.len() < 2 || v.windows(2).any(|w| !(w[1] > w[0])) {
        return Err(Error::input(format!(
            "{option} `{s}`: expected at least two increasing bin edges"
        )));
    }
    Ok(v)
}

/// A percentage with sensible digits.
pub fn pct(p: f64) -> String {
    let x = 100.0 * p;
    if x >= 10.0 {
        format!("{x:.1}%")
    } else if x >= 0.1 {
        format!("{x:.2}%")
    } else {
        format!("{x:.3}%")
    }
}

/// Options every analysis command shares.
#[derive(clap::Args, Debug, Clone)]
pub struct RunArgs {
    /// Output directory: the command's tables and summary.json.
    #[arg(long)]
    pub out: std::path::PathBuf,
    /// Run seed: with the object ids it fixes every random draw.
    #[arg(long, default_value_t = 1)]
    pub seed: u64,
    /// Worker threads (default: all cores). Results do not depend on it.
    #[arg(long)]
    pub threads: Option<usize>,
    /// Table format: parquet or csv.
    #[arg(long, default_value = "parquet")]
    pub format: String,
    /// No conclusion or file list on stderr.
    #[arg(long)]
    pub quiet: bool,
}

impl RunArgs {
    /// Size the pool and start the provenance (with the seed).
    pub fn start(&self) -> Result<seine::io::Provenance> {
        set_threads(self.threads)?;
        Ok(seine::io::Provenance::current().with_seed(self.seed))
    }

    pub fn out_dir(&self, provenance: seine::io::Provenance) -> Result<OutDir> {
        Ok(OutDir {
            dir: self.out.clone(),
            format: parse_format(&self.format)?,
            provenance,
        })
    }

    /// Print the conclusion and what was written, unless quiet.
    pub fn report(&self, conclusion: &str, written: &[&std::path::Path]) {
        if !self.quiet {
            eprintln!("{conclusion}");
            let list: Vec<String> = written.iter().map(|p| p.display().to_string()).collect();
            eprintln!("wrote {}", list.join(", "));
        }
    }
}

/// Which elements of a catalogue an analysis takes, and the orbit-quality cut: for catalogues
/// written by `seine observe --fit-orbits` (flatten into a command that reads a catalogue).
#[derive(clap::Args, Debug, Clone, Default)]
pub struct CatalogueArgs {
    /// Take the catalogue's fitted elements (fit_a_au …, written by observe --fit-orbits)
    /// instead of the true ones.
    #[arg(long)]
    pub fitted_elements: bool,
    /// Keep only catalogue objects with a fitted arc of at least this many days.
    #[arg(long)]
    pub min_arc_days: Option<f64>,
    /// Keep only catalogue objects whose fitted σa/a is at most this.
    #[arg(long)]
    pub max_sigma_a_frac: Option<f64>,
    /// Keep only catalogue objects of these fit classes, comma-separated (single_night,
    /// short_arc, one_opposition, multi_opposition).
    #[arg(long, value_delimiter = ',')]
    pub fit_quality: Vec<String>,
}

impl CatalogueArgs {
    /// The selection, checked.
    pub fn selection(&self) -> Result<seine::fit::catalogue::Selection> {
        use seine::fit::Quality;
        let plausible = |option: &str, v: Option<f64>| match v {
            Some(x) => seine::ranges::check_option(option, x).map(|_| v),
            None => Ok(v),
        };
        let qualities = self
            .fit_quality
            .iter()
            .map(|s| {
                Quality::parse(s.trim())
                    .filter(|q| *q != Quality::Failed)
                    .ok_or_else(|| {
                        Error::input(format!(
                            "--fit-quality: expected single_night, short_arc, one_opposition or multi_opposition, found `{s}`"
                        ))
                    })
            })
            .collect::<Result<Vec<_>>>()?;
        Ok(seine::fit::catalogue::Selection {
            fitted: self.fitted_elements,
            min_arc_days: plausible("--min-arc-days", self.min_arc_days)?,
            max_sigma_a_frac: plausible("--max-sigma-a-frac", self.max_sigma_a_frac)?,
            qualities,
        })
    }

    /// Read a catalogue under the selection, saying on stderr what the cut left out.
    pub fn read(&self, path: &std::path::Path) -> Result<seine::io::objects::ObjectTable> {
        let selection = self.selection()?;
        let (table, left_out) = selection.read(path)?;
        if !selection.is_plain() {
            eprintln!(
                "{}: {} objects ({}), {left_out} left out by the cut",
                path.display(),
                table.len(),
                selection.describe()
            );
        }
        Ok(table)
    }
}
