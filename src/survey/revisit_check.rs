//! Whether a plan kept its designed revisits. A plan asks for each field to be seen every k
//! nights (or on given nights of a cycle), `visits_per_night` times a night; when the dark
//! time cannot hold every field of the region that often (too many fields, too short nights,
//! too much weather) the greedy scheduler visits the fields that waited longest and the
//! others slip. The check compares, per field, the interval between the successive nights
//! it was observed with the designed interval, and each field-night's visits with the
//! designed number.
//!
//! The planner observes only on the nights the design wants, and loses whole nights to the
//! weather the plan asks for (`weather_loss`); neither is a failure to keep the design. So
//! intervals are counted in the nights the plan observed (wanted, clear, with dark time): a
//! field keeps the design when it was seen on every one of them between its first and last
//! night, its intervals' median being one observing night (the median ignores a few long
//! gaps from the region's seasonal motion or the Moon). Counted in calendar nights, a weather
//! loss of 30% turns half the fields of an every-3-nights plan into fields of median 4.5
//! nights, and the median of an irregular cycle (nights 0, 1, 2, 29, … of a year) is no
//! interval any field is meant to keep; the calendar median is still reported beside the
//! designed one. The plan is called kept when at least `KEPT_SHARE` of the revisited fields
//! and of the field-nights are as designed (90%: our choice, common practice, no source).

use std::collections::BTreeMap;

use serde::Serialize;

use super::planner::{Plan, Revisit};
use super::visits::night_of;

/// The share of fields and field-nights as designed below which a plan is not kept.
pub const KEPT_SHARE: f64 = 0.9;

/// The designed revisits against the achieved ones.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct RevisitCheck {
    /// The designed pattern in words ("every 3 nights", "nights 0, 1, 29 of every 365").
    pub designed: String,
    /// The designed interval between a field's successive observing nights (median over the
    /// cycle for `night_offsets`), nights.
    pub designed_days: f64,
    /// The median interval achieved, over every field's successive observed nights; `None`
    /// when no field was observed on two nights.
    pub achieved_median_days: Option<f64>,
    /// Nights on which the plan observed (wanted by the design, clear, with dark time).
    pub observing_nights: usize,
    /// Fields observed on at least two nights, and those seen on every observing night of
    /// their season (the median of their intervals, in observing nights, is one).
    pub fields_revisited: usize,
    pub fields_as_designed: usize,
    pub visits_per_night: usize,
    /// (field, night) pairs observed, and those with the designed number of visits.
    pub field_nights: usize,
    pub field_nights_complete: usize,
}

impl RevisitCheck {
    pub fn of(plan: &Plan) -> RevisitCheck {
        let lon = plan.file.site.longitude_deg;
        let v = &plan.visits;
        let mut visits: BTreeMap<(i64, i64), usize> = BTreeMap::new();
        for (t, f) in v.mjd.iter().zip(&v.field_id) {
            *visits.entry((*f, night_of(*t, lon))).or_default() += 1;
        }
        let wanted = plan.file.revisit.visits_per_night;
        let mut nights: BTreeMap<i64, Vec<i64>> = BTreeMap::new();
        for (f, n) in visits.keys() {
            nights.entry(*f).or_default().push(*n);
        }
        // Each observing night's rank: intervals in observing nights are differences of ranks.
        let observing: BTreeMap<i64, i64> = plan
            .nights
            .iter()
            .filter(|n| n.n_visits > 0)
            .enumerate()
            .map(|(k, n)| (n.night, k as i64))
            .collect();
        let rank = |night: &i64| observing.get(night).copied().unwrap_or_default();
        let mut all_gaps = Vec::new();
        let (mut revisited, mut as_designed) = (0, 0);
        for ns in nights.values() {
            let gaps: Vec<f64> = ns.windows(2).map(|w| (w[1] - w[0]) as f64).collect();
            let ranks: Vec<f64> = ns.windows(2).map(|w| (rank(&w[1]) - rank(&w[0])) as f64).collect();
            if let Some(m) = median(ranks) {
                revisited += 1;
                as_designed += usize::from(m < 1.5);
            }
            all_gaps.extend(gaps);
        }
        RevisitCheck {
            designed: pattern(&plan.file.revisit),
            designed_days: designed_days(&plan.file.revisit),
            achieved_median_days: median(all_gaps),
            observing_nights: observing.len(),
            fields_revisited: revisited,
            fields_as_designed: as_designed,
            visits_per_night: wanted,
            field_nights: visits.len(),
            field_nights_complete: visits.values().filter(|&&k| k >= wanted).count(),
        }
    }

    /// The share of revisited fields seen on every observing night of their span.
    pub fn share_fields_as_designed(&self) -> f64 {
        share(self.fields_as_designed, self.fields_revisited)
    }

    /// The share of field-nights with the designed number of visits.
    pub fn share_nights_complete(&self) -> f64 {
        share(self.field_nights_complete, self.field_nights)
    }

    pub fn kept(&self) -> bool {
        self.share_fields_as_designed() >= KEPT_SHARE && self.share_nights_complete() >= KEPT_SHARE
    }

    /// One sentence for the user when the plan was not kept.
    pub fn warning(&self) -> Option<String> {
        if self.kept() {
            return None;
        }
        let achieved = self
            .achieved_median_days
            .map_or("no field was observed on two nights".into(), |m| {
                format!("achieved median {}", count_nights(m))
            });
        Some(format!(
            "the plan does not keep its designed revisits: designed {}; on the {} nights it \
             observed (the wanted nights that the weather and the dark time allowed), {:.0}% of \
             the {} fields seen on two or more nights were seen on every one of those nights in \
             their season (median interval one observing night), and {:.0}% of the {} \
             field-nights had all {} visits; in calendar nights, {achieved} against a designed \
             median of {} (the nights cannot hold every field as often as designed: fewer fields, \
             fewer visits per night or a longer interval would fit)",
            self.designed,
            self.observing_nights,
            100.0 * self.share_fields_as_designed(),
            self.fields_revisited,
            100.0 * self.share_nights_complete(),
            self.field_nights,
            self.visits_per_night,
            count_nights(self.designed_days),
        ))
    }
}

/// The designed interval: `every_nights`, or the median gap between a cycle's offsets
/// (the last wrapping to the first of the next cycle).
pub fn designed_days(r: &Revisit) -> f64 {
    if r.night_offsets.is_empty() {
        return r.every_nights as f64;
    }
    let mut o = r.night_offsets.clone();
    o.sort_unstable();
    o.dedup();
    let mut gaps: Vec<f64> = o.windows(2).map(|w| (w[1] - w[0]) as f64).collect();
    gaps.push((r.cycle_nights - o[o.len() - 1] + o[0]) as f64);
    median(gaps).unwrap_or(r.cycle_nights as f64)
}

fn median(mut x: Vec<f64>) -> Option<f64> {
    if x.is_empty() {
        return None;
    }
    x.sort_by(f64::total_cmp);
    let n = x.len();
    Some(if n % 2 == 1 {
        x[n / 2]
    } else {
        0.5 * (x[n / 2 - 1] + x[n / 2])
    })
}

fn share(k: usize, n: usize) -> f64 {
    if n == 0 { 0.0 } else { k as f64 / n as f64 }
}

/// "1 night", "3 nights", "4.5 nights".
fn count_nights(x: f64) -> String {
    match x {
        1.0 => "1 night".into(),
        x if x.fract() == 0.0 => format!("{x:.0} nights"),
        x => format!("{x:.1} nights"),
    }
}

/// "every night", "every 3 nights", "nights 0, 1, 29 of every 365".
fn pattern(r: &Revisit) -> String {
    match (r.night_offsets.as_slice(), r.every_nights) {
        ([], 1) => "every night".into(),
        ([], k) => format!("every {k} nights"),
        (o, _) => {
            let o: Vec<String> = o.iter().map(|x| x.to_string()).collect();
            format!("nights {} of every {}", o.join(", "), r.cycle_nights)
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn designed_interval_of_a_cycle_is_its_median_gap() {
        let r = Revisit {
            night_offsets: vec![0, 1, 7],
            cycle_nights: 14,
            ..Default::default()
        };
        // Gaps 1, 6 and 7 (from 7 to 14 + 0): median 6.
        assert_eq!(designed_days(&r), 6.0);
        let every = Revisit {
            every_nights: 3,
            ..Default::default()
        };
        assert_eq!(designed_days(&every), 3.0);
    }
}
