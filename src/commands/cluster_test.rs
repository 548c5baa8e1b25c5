//! `seine cluster-test`: how significant the clustering of a catalogue's ϖ, Ω, ω, poles and
//! perihelia is once the surveys' bias is accounted for (AJ 157, 62, 2019), beside the naive
//! p-values. The statistics are in `analysis::cluster_test`, the files in
//! `analysis::cluster_tables` (and the maps' in `analysis::bias_map_tables`); this is the run.

use std::path::{Path, PathBuf};

use super::bias_map::MapOptions;
use super::{Outcome, RunOptions, load_surveys, read_catalogue, trial_elements};
use crate::analysis::bias_map::BiasMap;
use crate::analysis::cluster_test::{self as ct, Angles, ClusterTest, TestOptions};
use crate::analysis::trial_selection::TrialSelection;
use crate::analysis::{bias_map_tables, cluster_tables};
use crate::error::{Error, Result};
use crate::fit::catalogue::Selection;
use crate::fit::quality::Quality;
use crate::io::Provenance;
use crate::population::objects::ObjectTable;
use crate::statistics::pct;

/// The options of `seine cluster-test`.
#[derive(Debug, Clone)]
pub struct ClusterTestOptions {
    /// Survey specs, to compute the bias maps here (without `bias_maps`).
    pub surveys: Vec<PathBuf>,
    /// The observed catalogue, and which of its elements and rows are taken.
    pub catalog: PathBuf,
    pub selection: Selection,
    /// Map tables written by `seine bias-map` for these objects (several shards' tables).
    pub bias_maps: Vec<PathBuf>,
    pub maps: MapOptions,
    /// Trials, replicas, cuts, rose bins and the seed of the synthetic catalogues.
    pub test: TestOptions,
    /// Leave out the objects whose bias map holds no discovery (otherwise refused).
    pub drop_undiscovered: bool,
    pub run: RunOptions,
}

impl ClusterTestOptions {
    /// Every check that needs no input file: nothing is computed or written for a bad option.
    pub fn validate(&self) -> Result<()> {
        if self.test.replicas < 2 {
            return Err(Error::input(format!(
                "--replicas {}: expected at least 2 (the errors are their spread)",
                self.test.replicas
            )));
        }
        self.test.check()?;
        self.maps.validate()?;
        if self.bias_maps.is_empty() && self.surveys.is_empty() {
            return Err(Error::input(
                "cluster-test: give --survey (to compute bias maps) or --bias-map",
            ));
        }
        Ok(())
    }

    /// The budget of the synthetic catalogues of `objects` objects.
    fn check_budget(&self, objects: usize) -> Result<()> {
        let draws = objects as f64 * self.test.trials as f64;
        crate::budget::check(crate::budget::CLUSTER_TRIALS, draws, "--trials", self.maps.over_budget)?;
        // Every synthetic catalogue's statistics, held for the pooled ranks and cluster_null.*:
        // 8 bytes per statistic (9 per sample and the global one), bias-aware and naive, and as
        // much again while they are ranked.
        let statistics = 1.0 + 9.0 * (1 + self.test.cuts.len()) as f64;
        let bytes = 2.0 * 16.0 * statistics * self.test.trials as f64;
        crate::budget::check_memory(bytes, "--trials", self.maps.over_budget)
    }
}

/// Run `seine cluster-test`: the maps (read or computed), the test, its tables and summary.
pub fn cluster_test(opts: &ClusterTestOptions) -> Result<Outcome> {
    opts.validate()?;
    let mut prov = opts.run.provenance();
    let (catalog, note) = read_catalogue(&opts.selection, &opts.catalog)?;
    prov.add_input(&opts.catalog)?;
    if catalog.len() < 2 {
        // Refused before the maps are made: they would cost minutes and test nothing.
        return Err(Error::input(format!(
            "{}: {} object(s) selected; the clustering test needs at least two",
            opts.catalog.display(),
            catalog.len()
        )));
    }
    opts.check_budget(catalog.len())?;
    let (elements, law_note) = trial_elements(&opts.selection, &opts.catalog, &catalog.ids)?;
    let selection = opts.maps.trial_selection(&opts.selection, elements);
    let maps = catalogue_maps(opts, (&catalog, &selection), &mut prov)?;
    let summaries: Vec<_> = maps.iter().map(BiasMap::summary).collect();
    let (undiscovered, thin) = opts.maps.thin_maps(&summaries)?;
    if !undiscovered.is_empty() && !opts.drop_undiscovered {
        return Err(Error::input(format!(
            "cluster-test: the bias maps of ids {undiscovered:?} hold no discovery (the surveys never found \
             these objects at any angle tried); drawing them uniformly would bias the test. Give \
             --drop-undiscovered to test the others, or raise --max-trials-per-object (run `seine bias-map` \
             first to keep the maps)"
        )));
    }
    let mut res = run_test(opts, &catalog, &maps)?;
    let withheld = uncalibrated_selection(&opts.selection);
    if withheld.is_some() {
        res.withhold_bias_aware_chances();
    }
    let out = opts.run.out_dir(prov);
    if opts.bias_maps.is_empty() {
        bias_map_tables::write(&out, &maps, &catalog, &selection)?;
    }
    let [table, null, rose] = cluster_tables::write(&out, &res)?;
    let mut conclusion = conclude(&res, &undiscovered, &thin);
    if selection != TrialSelection::Discovered {
        // The maps' trials went through the catalogue's own selection (methods.md, "Bias maps
        // of a catalogue of fitted orbits"), so the bias-aware chances are the catalogue's.
        conclusion += &format!(
            "\n  The bias maps' trials went through the catalogue's selection: {}.",
            selection.key()
        );
    }
    if let Some(why) = &withheld {
        conclusion += &format!("\n  Bias-aware chances withheld: {why}.");
    }
    let mut value = serde_json::to_value(&res).map_err(|e| Error::io(e.to_string()))?;
    value["command"] = "cluster-test".into();
    value["chances_withheld"] = serde_json::json!(withheld);
    value["dropped_undiscovered_ids"] = serde_json::json!(undiscovered);
    value["below_min_discoveries_ids"] = serde_json::json!(thin);
    value["selection"] = serde_json::json!(selection.key());
    let summary = out.summary(value, &conclusion)?;
    Ok(Outcome {
        written: vec![table, null, rose, summary],
        conclusion,
        notes: note.into_iter().chain(law_note).collect(),
    })
}

/// The catalogue's maps, in catalogue order, their trials under `selection`: read from the
/// given tables (made under the same selection), or computed.
fn catalogue_maps(
    opts: &ClusterTestOptions,
    (catalog, selection): (&ObjectTable, &TrialSelection),
    prov: &mut Provenance,
) -> Result<Vec<BiasMap>> {
    let Some(first) = opts.bias_maps.first() else {
        opts.maps.check_budget(catalog.len(), catalog.len())?;
        let surveys = load_surveys(&opts.surveys, prov)?;
        let rows = (0..catalog.len(), selection);
        return opts
            .maps
            .maps(catalog, rows, &surveys, opts.run.seed, opts.run.progress);
    };
    let mut maps = Vec::new();
    for p in &opts.bias_maps {
        prov.add_input(p)?;
        maps.extend(bias_map_tables::read(p, catalog, selection)?);
    }
    order_maps(maps, catalog, first)
}

/// The test on the objects whose maps hold a discovery, with a progress bar over replicas.
fn run_test(opts: &ClusterTestOptions, catalog: &ObjectTable, maps: &[BiasMap]) -> Result<ClusterTest> {
    let keep: Vec<usize> = (0..maps.len()).filter(|j| maps[*j].total_discoveries() > 0).collect();
    let angles = Angles::of(catalog).select(&keep);
    // The maps are the run's largest state: copied only when some are left out.
    let selected: Vec<BiasMap>;
    let tested = if keep.len() == maps.len() {
        maps
    } else {
        selected = keep.iter().map(|j| maps[*j].clone()).collect();
        &selected
    };
    let bar = crate::progress::bar(u64::from(opts.test.replicas) + 1, "map replicas", opts.run.progress);
    let tick = || {
        if let Some(b) = &bar {
            b.inc(1)
        }
    };
    let res = ct::cluster_test(&angles, tested, &opts.test, &tick)?;
    if let Some(b) = bar {
        b.finish_and_clear();
    }
    Ok(res)
}

/// The maps in catalogue order; every catalogue id needs one.
fn order_maps(maps: Vec<BiasMap>, catalog: &ObjectTable, path: &Path) -> Result<Vec<BiasMap>> {
    let mut by_id: std::collections::HashMap<i64, _> = maps.into_iter().map(|m| (m.id, m)).collect();
    catalog
        .ids
        .iter()
        .map(|id| {
            by_id
                .remove(id)
                .ok_or_else(|| Error::input(format!("{}: no bias map for catalogue id {id}", path.display())))
        })
        .collect()
}

/// The fit classes and the largest σa/a of the sample whose bias-aware chances on fitted
/// elements were shown calibrated (validation.md, "On fitted elements": 600 null catalogues cut to
/// one-opposition fits with σa/a ≤ 0.25).
const CALIBRATED_CLASSES: [Quality; 1] = [Quality::OneOpposition];
const CALIBRATED_MAX_SIGMA_A_FRAC: f64 = 0.25;

/// Why the bias-aware chances are withheld for this selection, if they are. On true elements
/// (with or without a cut) the construction is exact and calibrated. On fitted elements the maps
/// draw a, e, i from a Gaussian error law (methods.md, "What the maps' xⱼ are"), shown calibrated
/// only for a sample cut to the classes and σa/a above: orbits made with the fit's prior
/// (`short_arc`, `single_night`) have errors far from that law, and multi-opposition fits were
/// not in the measured case. A chance not shown calibrated is not printed as one.
pub fn uncalibrated_selection(selection: &Selection) -> Option<String> {
    let classes = !selection.qualities.is_empty() && selection.qualities.iter().all(|q| CALIBRATED_CLASSES.contains(q));
    let sigma = selection
        .max_sigma_a_frac
        .is_some_and(|s| s <= CALIBRATED_MAX_SIGMA_A_FRAC);
    (selection.fitted && !(classes && sigma)).then(|| {
        format!(
            "on fitted elements they are shown calibrated only for a sample cut to {} fits with σa/a ≤ \
             {CALIBRATED_MAX_SIGMA_A_FRAC} (validation.md); cut the catalogue so (`--fit-quality {} \
             --max-sigma-a-frac {CALIBRATED_MAX_SIGMA_A_FRAC}` or tighter) to have them",
            CALIBRATED_CLASSES.map(Quality::name).join(" or "),
            CALIBRATED_CLASSES.map(Quality::name).join(","),
        )
    })
}

fn conclude(t: &ClusterTest, dropped: &[i64], thin: &[i64]) -> String {
    let r = |name: &str| t.result(name).expect("every statistic is reported");
    let line = |label: &str, name: &str| {
        let x = r(name);
        let bias_aware = if x.p_bias_aware.is_finite() {
            format!(
                "bias-aware chance {} ± {}",
                pct(x.p_bias_aware),
                pct(x.p_bias_aware_error)
            )
        } else {
            "bias-aware chance withheld".to_string()
        };
        format!("{label}: {bias_aware}, without bias correction {}", pct(x.p_naive))
    };
    let family = t.results.len() - 1;
    let mut s = format!(
        "seine cluster-test: {} objects, {} synthetic catalogues drawn from their bias maps, errors from {} \
         bootstrap replicas of the maps.\n  {} — the chance that the most significant of all {family} \
         statistics{} is at least this significant: the number to quote unless one statistic was chosen \
         before looking.\n  {} (mean ϖ {:.0}°, R/n = {:.2}).\n  {}.\n  {}.\n  {} (Fisher's combination).",
        t.n_objects,
        t.trials,
        t.replicas,
        line("Global (look-elsewhere)", ct::GLOBAL),
        if t.results.iter().any(|x| x.sample != "all") {
            " over all samples"
        } else {
            ""
        },
        line("ϖ clustering (Rayleigh)", "rayleigh_varpi"),
        r("rayleigh_varpi").direction_lon_deg,
        r("rayleigh_varpi").observed,
        line("Ω clustering (Rayleigh)", "rayleigh_node"),
        line("mean orbital pole", "mean_pole"),
        line("poles and perihelia together", ct::COMBINED)
    );
    if !dropped.is_empty() {
        s += &format!(
            "\n  Warning: left out, their bias maps hold no discovery: ids {dropped:?} (--drop-undiscovered)."
        );
    }
    if !thin.is_empty() {
        s += &format!(
            "\n  Note: maps short of the asked discoveries at the trial cap, ids {thin:?}; the errors include their noise."
        );
    }
    s
}
