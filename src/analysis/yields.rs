//! Cadence yields: for each survey (and for all of them together), discoveries and secured
//! objects of a population in bins of distance at discovery, H and a, with binomial errors
//! and the ratio to the best survey in each bin — the table a survey proposal quotes.
//!
//! Each object is run once through all surveys (its `Observe` stream, as `seine observe`);
//! the engine gives every survey its own verdict. Fractions: per H or a bin, discoveries
//! over the objects in that bin; per distance bin, discoveries at that distance over the
//! whole population (the distance exists only for a discovery). Every fraction is weighted by
//! the objects' weights (importance sampling), with its interval at the effective n
//! (`crate::statistics`); raw counts are kept beside.

use crate::engine::{Batch, ObjectOutcome, PreparedSurvey, StopRule};
use crate::population::objects::ObjectTable;
use crate::statistics::{Proportion, Tally};

/// The default bin edges (comma-separated, as the options take them) of the distance at
/// discovery (AU), the absolute magnitude H (mag) and the semi-major axis a (AU).
pub const DEFAULT_R_EDGES: &str = "0,30,40,50,70,100,150,250,500,1000,100000";
pub const DEFAULT_H_EDGES: &str = "-5,3,4,5,6,7,8,9,10,20";
pub const DEFAULT_A_EDGES: &str = "0,30,50,100,250,1000,100000";

/// The binned quantities.
pub const QUANTITIES: [&str; 3] = ["r_discovery_au", "h_mag", "a_au"];

/// What one object did in one survey (index = survey, the last = any survey).
#[derive(Debug, Clone, Copy, PartialEq)]
struct Verdict {
    discovered: bool,
    secured: bool,
    r_au: f64,
}

/// One row of the yield table.
#[derive(Debug, Clone, PartialEq)]
pub struct YieldRow {
    pub survey: String,
    pub quantity: &'static str,
    pub lo: f64,
    pub hi: f64,
    pub n_objects: u64,
    pub discovered: Proportion,
    /// Objects seen again (secured), counted and weighted.
    pub secured: u64,
    pub secured_fraction: f64,
    /// This survey's discovered fraction over the best single survey's in the bin.
    pub ratio_to_best: f64,
}

/// Run the population once through the surveys and return one verdict per survey plus "any".
fn verdicts(objects: &ObjectTable, surveys: &[PreparedSurvey], seed: u64) -> Vec<Vec<Verdict>> {
    // Verdicts and the discovery's distance are all a yield needs.
    Batch::new(surveys, seed, StopRule::UntilSecured).map(objects, 0..objects.len(), |_, out| per_survey(&out, surveys))
}

fn per_survey(out: &ObjectOutcome, surveys: &[PreparedSurvey]) -> Vec<Verdict> {
    let mut v: Vec<Verdict> = out
        .surveys
        .iter()
        .map(|s| Verdict {
            discovered: s.discovered,
            secured: s.secured,
            r_au: s.discovery_event.map_or(f64::NAN, |e| out.events[e].r_au),
        })
        .collect();
    let first = out.first_discovery(|e| surveys[e.survey as usize].survey.visits.mjd[e.visit as usize]);
    v.push(Verdict {
        discovered: out.discovered(),
        secured: out.surveys.iter().any(|s| s.secured),
        r_au: first.map_or(f64::NAN, |(_, e)| out.events[e].r_au),
    });
    v
}

/// The yield table over the given bin edges (distance at discovery, H, a), and each survey's
/// totals (then "any").
pub fn yields(
    objects: &ObjectTable,
    surveys: &[PreparedSurvey],
    seed: u64,
    edges: &[Vec<f64>; 3],
) -> (Vec<YieldRow>, Vec<(Tally, Tally)>) {
    let v = verdicts(objects, surveys, seed);
    let mut names: Vec<String> = surveys.iter().map(|s| s.survey.name.clone()).collect();
    names.push("any".into());
    let mut rows = Vec::new();
    for (q, quantity) in QUANTITIES.iter().enumerate() {
        for b in edges[q].windows(2) {
            let mut block: Vec<YieldRow> = (0..names.len())
                .map(|s| bin_row(objects, &v, s, q, (b[0], b[1]), &names[s], quantity))
                .collect();
            let best = block[..surveys.len()]
                .iter()
                .map(|r| r.discovered.fraction)
                .filter(|f| f.is_finite())
                .fold(0.0, f64::max);
            for r in &mut block {
                r.ratio_to_best = if best > 0.0 {
                    r.discovered.fraction / best
                } else {
                    f64::NAN
                };
            }
            rows.extend(block);
        }
    }
    (rows, totals_of(objects, &v))
}

fn bin_row(
    objects: &ObjectTable,
    v: &[Vec<Verdict>],
    s: usize,
    q: usize,
    (lo, hi): (f64, f64),
    name: &str,
    quantity: &'static str,
) -> YieldRow {
    let inside = |x: f64| x >= lo && x < hi;
    let (mut found, mut secured) = (Tally::default(), Tally::default());
    for (i, vi) in v.iter().enumerate() {
        let x = match q {
            0 => vi[s].r_au,
            1 => objects.h_mag[i],
            _ => objects.elements[i].a_au,
        };
        // Distance bins count the whole population in the denominator.
        if q == 0 || inside(x) {
            let hit = vi[s].discovered && inside(x);
            found.add(objects.weight[i], hit);
            secured.add(objects.weight[i], hit && vi[s].secured);
        }
    }
    let t = secured.proportion();
    YieldRow {
        survey: name.into(),
        quantity,
        lo,
        hi,
        n_objects: found.n,
        discovered: found.proportion(),
        secured: t.k,
        secured_fraction: t.fraction,
        ratio_to_best: f64::NAN,
    }
}

/// Each survey's (and "any"'s) totals over the whole population: the discovered and the
/// secured objects, weighted.
pub fn totals(objects: &ObjectTable, surveys: &[PreparedSurvey], seed: u64) -> Vec<(Tally, Tally)> {
    totals_of(objects, &verdicts(objects, surveys, seed))
}

fn totals_of(objects: &ObjectTable, v: &[Vec<Verdict>]) -> Vec<(Tally, Tally)> {
    let k = v.first().map_or(0, Vec::len);
    let mut out = vec![(Tally::default(), Tally::default()); k];
    for (i, vi) in v.iter().enumerate() {
        for (s, t) in out.iter_mut().enumerate() {
            t.0.add(objects.weight[i], vi[s].discovered);
            t.1.add(objects.weight[i], vi[s].secured);
        }
    }
    out
}
