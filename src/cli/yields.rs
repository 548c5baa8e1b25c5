//! `seine yield`: the cadence designer's comparison of surveys on one population.

use std::path::PathBuf;

use seine::analysis::yields::yields;
use seine::io::objects::ObjectTable;
use seine::{Error, Result};

use super::common::*;

#[derive(clap::Args, Debug)]
#[command(group(clap::ArgGroup::new("compared").required(true).multiple(true).args(["surveys", "plans"])))]
pub struct Args {
    /// Survey spec (TOML); repeat to compare surveys. At least one --survey or --plan.
    #[arg(long = "survey")]
    pub surveys: Vec<PathBuf>,
    /// Cadence plan (TOML): built first into DIR/plans/<name>.csv and its survey spec; repeat.
    #[arg(long = "plan")]
    pub plans: Vec<PathBuf>,
    /// The population (objects table) to run through every survey.
    #[arg(long)]
    pub objects: PathBuf,
    /// Bin edges of the heliocentric distance at discovery, AU (comma-separated).
    #[arg(long, default_value = "0,30,40,50,70,100,150,250,500,1000,100000")]
    pub r_edges: String,
    /// Bin edges of the absolute magnitude H, mag (comma-separated).
    #[arg(long, default_value = "-5,3,4,5,6,7,8,9,10,20")]
    pub h_edges: String,
    /// Bin edges of the semi-major axis a, AU (comma-separated).
    #[arg(long, default_value = "0,30,50,100,250,1000,100000")]
    pub a_edges: String,
    #[command(flatten)]
    pub run: RunArgs,
}

pub fn run(a: Args) -> Result<()> {
    let edges = [
        parse_edges("--r-edges", &a.r_edges)?,
        parse_edges("--h-edges", &a.h_edges)?,
        parse_edges("--a-edges", &a.a_edges)?,
    ];
    let mut prov = a.run.start()?;
    let mut specs = a.surveys.clone();
    for plan in &a.plans {
        let stem = plan
            .file_stem()
            .map_or("plan".into(), |s| s.to_string_lossy().into_owned());
        prov.add_input(plan)?;
        specs.push(super::plan::run_plan(
            plan,
            &a.run.out.join("plans").join(format!("{stem}.csv")),
            None,
        )?);
    }
    let surveys = load_surveys(&specs, &mut prov)?;
    let objects = ObjectTable::read(&a.objects)?;
    prov.add_input(&a.objects)?;
    let out = a.run.out_dir(prov)?;
    let rows = yields(&objects, &surveys, a.run.seed, &edges);
    let props: Vec<_> = rows.iter().map(|r| r.discovered).collect();
    let table = out.write(
        "yield",
        vec![
            col("survey", rows.iter().map(|r| r.survey.clone()).collect::<Vec<String>>()),
            col(
                "quantity",
                rows.iter().map(|r| r.quantity.to_string()).collect::<Vec<String>>(),
            ),
            col("bin_lo", rows.iter().map(|r| r.lo).collect::<Vec<f64>>()),
            col("bin_hi", rows.iter().map(|r| r.hi).collect::<Vec<f64>>()),
            col("n_objects", rows.iter().map(|r| r.n_objects).collect::<Vec<u64>>()),
            col("secured", rows.iter().map(|r| r.secured).collect::<Vec<u64>>()),
            col(
                "ratio_to_best",
                rows.iter().map(|r| r.ratio_to_best).collect::<Vec<f64>>(),
            ),
        ]
        .into_iter()
        .chain(proportion_columns(&props))
        .collect(),
    )?;
    // Totals per survey: the distance bins partition the discoveries (every discovery has a distance).
    let mut totals = Vec::new();
    for s in surveys.iter().map(|s| s.survey.name.clone()).chain(["any".to_string()]) {
        let (k, t): (u64, u64) = rows
            .iter()
            .filter(|r| r.survey == s && r.quantity == "r_discovery_au")
            .fold((0, 0), |acc, r| (acc.0 + r.discovered.k, acc.1 + r.secured));
        totals.push((s, k, t));
    }
    let n = objects.len() as u64;
    if n == 0 {
        return Err(Error::input("--objects: the population is empty"));
    }
    let best = totals[..surveys.len()]
        .iter()
        .max_by_key(|t| t.1)
        .expect("at least one survey");
    let list: Vec<String> = totals
        .iter()
        .map(|(s, k, t)| {
            let p = seine::analysis::binomial::Proportion::new(*k, n);
            format!(
                "{s}: {k} discovered ({} ± {}), {t} secured",
                pct(p.fraction),
                pct(p.std_error)
            )
        })
        .collect();
    let cadence = cadence_rows(&surveys, &totals, n, &population_name(&a.objects));
    let cadence_table = out.write(
        "yield_cadence",
        vec![
            col("plan", cadence.iter().map(|r| r.0.clone()).collect::<Vec<String>>()),
            col(
                "population",
                cadence.iter().map(|r| r.1.clone()).collect::<Vec<String>>(),
            ),
            col("cadence_days", cadence.iter().map(|r| r.2).collect::<Vec<f64>>()),
            col("n_objects", cadence.iter().map(|r| r.3).collect::<Vec<u64>>()),
            col("n_discovered", cadence.iter().map(|r| r.4).collect::<Vec<u64>>()),
        ],
    )?;
    let conclusion = format!(
        "seine yield: {n} objects. {}. Most discoveries: {}.",
        list.join("; "),
        best.0
    );
    let summary = out.summary(
        serde_json::json!({
            "command": "yield",
            "objects": n,
            "totals": totals.iter().map(|(s, k, t)| serde_json::json!({"survey": s, "discovered": k, "secured": t})).collect::<Vec<_>>(),
            "best_survey": best.0,
        }),
        &conclusion,
    )?;
    a.run.report(&conclusion, &[&table, &cadence_table, &summary]);
    Ok(())
}

/// `yield_cadence`: per survey (plan) its revisit interval (the median number of nights
/// between successive nights a field was visited) and what it discovered; surveys that never
/// revisit a field have no interval and no row.
fn cadence_rows(
    surveys: &[seine::engine::PreparedSurvey],
    totals: &[(String, u64, u64)],
    n: u64,
    population: &str,
) -> Vec<(String, String, f64, u64, u64)> {
    surveys
        .iter()
        .zip(totals)
        .filter_map(|(s, (name, k, _))| {
            let days = seine::report::inputs::median_revisit_days(&s.survey)?;
            Some((name.clone(), population.to_string(), days, n, *k))
        })
        .collect()
}

/// The population's name from the spec `seine draw` stored in a Parquet table, else the
/// file's stem.
fn population_name(objects: &std::path::Path) -> String {
    let stem = objects
        .file_stem()
        .map_or("population".into(), |s| s.to_string_lossy().into_owned());
    let spec = seine::io::table::read_parquet_metadata(objects)
        .ok()
        .and_then(|kv| kv.into_iter().find(|(k, _)| k == "seine.population_spec"))
        .and_then(|(_, text)| text.parse::<toml::Table>().ok());
    spec.as_ref()
        .and_then(|t| t.get("population")?.get("name")?.as_str().map(String::from))
        .unwrap_or(stem)
}
