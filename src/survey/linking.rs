//! Linking rules: what a search pipeline needs before it calls a moving object discovered.
//!
//! * Tracklet: ≥ `min_detections_per_night` detections in one night spanning
//!   ≥ `min_tracklet_span_min` minutes (last − first).
//! * Discovery: tracklets on ≥ `min_nights` distinct nights whose first and last nights lie
//!   within `window_days`, and, if `min_arc_arcsec` > 0, whose detections span an arc of at
//!   least that much (the separation of the earliest and the latest detection of the set),
//!   so that very slow movers count only once their motion is resolved. The discovery is the
//!   earliest detection at which the rule is satisfied.
//! * Secured: discovered and detected again ≥ `secure_after_days` after the discovery (default
//!   365 days, about one opposition later: common practice, no source).

use serde::{Deserialize, Serialize};

use crate::sky::frames::{separation, unit_vector};

#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields, default)]
pub struct LinkingRules {
    pub min_detections_per_night: usize,
    pub min_tracklet_span_min: f64,
    pub min_nights: usize,
    pub window_days: f64,
    pub min_arc_arcsec: f64,
    pub secure_after_days: f64,
}

impl Default for LinkingRules {
    fn default() -> Self {
        LinkingRules {
            min_detections_per_night: 1,
            min_tracklet_span_min: 0.0,
            min_nights: 1,
            window_days: 3650.0,
            min_arc_arcsec: 0.0,
            secure_after_days: 365.0,
        }
    }
}

#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Detection {
    pub visit: usize,
    pub night: i64,
    pub mjd: f64,
    pub ra_rad: f64,
    pub dec_rad: f64,
}

#[derive(Debug, Clone, Copy, PartialEq, Default)]
pub struct LinkOutcome {
    pub discovered: bool,
    /// Index into the detections of the one that completes the rule.
    pub discovery: Option<usize>,
    /// Distinct nights with at least one detection.
    pub n_nights: usize,
    pub n_tracklet_nights: usize,
    pub secured: bool,
}

/// One night's detections: the index of the first and the index at which its tracklet completes.
struct Night {
    night: i64,
    first: usize,
    complete_at: Option<usize>,
}

impl LinkingRules {
    pub fn problem(&self) -> Option<String> {
        if self.min_detections_per_night == 0 || self.min_nights == 0 {
            return Some("linking.min_detections_per_night and linking.min_nights: expected at least 1".into());
        }
        let checks = [
            ("min_tracklet_span_min", self.min_tracklet_span_min),
            ("window_days", self.window_days),
            ("min_arc_arcsec", self.min_arc_arcsec),
            ("secure_after_days", self.secure_after_days),
        ];
        checks
            .iter()
            .find(|(_, v)| !(v.is_finite() && *v >= 0.0))
            .map(|(k, v)| format!("linking.{k}: expected a finite number ≥ 0, found {v}"))
    }

    /// Split detections (in time order) into nights and find where each night's tracklet completes.
    fn nights(&self, dets: &[Detection]) -> Vec<Night> {
        let mut out: Vec<Night> = Vec::new();
        for (i, d) in dets.iter().enumerate() {
            if out.last().is_none_or(|n| n.night != d.night) {
                out.push(Night {
                    night: d.night,
                    first: i,
                    complete_at: None,
                });
            }
            let n = out.last_mut().expect("pushed above");
            let count = i - n.first + 1;
            let span_min = (d.mjd - dets[n.first].mjd) * 1440.0;
            if n.complete_at.is_none()
                && count >= self.min_detections_per_night
                && span_min >= self.min_tracklet_span_min
            {
                n.complete_at = Some(i);
            }
        }
        out
    }

    pub fn link(&self, dets: &[Detection]) -> LinkOutcome {
        let nights = self.nights(dets);
        let n_nights = {
            let mut v: Vec<i64> = nights.iter().map(|n| n.night).collect();
            v.sort_unstable();
            v.dedup();
            v.len()
        };
        let tracklets: Vec<&Night> = nights.iter().filter(|n| n.complete_at.is_some()).collect();
        let discovery = self.discovery(dets, &tracklets);
        let secured =
            discovery.is_some_and(|k| dets[k..].iter().any(|d| d.mjd - dets[k].mjd >= self.secure_after_days));
        LinkOutcome {
            discovered: discovery.is_some(),
            discovery,
            n_nights,
            n_tracklet_nights: tracklets.len(),
            secured,
        }
    }

    /// Whether the discovery rule first holds at the last of `dets` (given that it held at
    /// none before): the discovery depends only on the detections up to it, so a caller
    /// adding detections in time order can stop at the first `true`.
    pub fn discovers_at_last(&self, dets: &[Detection]) -> bool {
        let Some(last) = dets.last() else { return false };
        let tonight = dets.iter().rev().take_while(|d| d.night == last.night).count();
        tonight >= self.min_detections_per_night && self.link(dets).discovered
    }

    /// The earliest detection at which the discovery rule holds. At each detection of a night
    /// whose tracklet is complete, the best set is every tracklet night back to the earliest one
    /// inside the window (the most nights and the longest arc).
    fn discovery(&self, dets: &[Detection], tracklets: &[&Night]) -> Option<usize> {
        let dir = |d: &Detection| unit_vector(d.ra_rad, d.dec_rad);
        for (k, t) in tracklets.iter().enumerate() {
            let start = tracklets[..=k].partition_point(|e| (t.night - e.night) as f64 > self.window_days);
            if k + 1 - start < self.min_nights {
                continue;
            }
            let earliest = dir(&dets[tracklets[start].first]);
            let last_of_night = dets[t.first..].iter().take_while(|d| d.night == t.night).count() + t.first;
            let done = t.complete_at.expect("tracklet nights are complete");
            let found = (done..last_of_night).find(|&i| {
                self.min_arc_arcsec <= 0.0
                    || separation(&earliest, &dir(&dets[i])).to_degrees() * 3600.0 >= self.min_arc_arcsec
            });
            if found.is_some() {
                return found;
            }
        }
        None
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn det(visit: usize, night: i64, mjd: f64, ra_arcsec: f64) -> Detection {
        Detection {
            visit,
            night,
            mjd,
            ra_rad: (ra_arcsec / 3600.0).to_radians(),
            dec_rad: 0.0,
        }
    }

    fn rules(n: usize, span: f64, nights: usize, window: f64) -> LinkingRules {
        LinkingRules {
            min_detections_per_night: n,
            min_tracklet_span_min: span,
            min_nights: nights,
            window_days: window,
            ..Default::default()
        }
    }

    #[test]
    fn single_detection_rule_discovers_at_first() {
        let d = [det(0, 10, 10.6, 0.0), det(1, 11, 11.6, 1.0)];
        let o = rules(1, 0.0, 1, 10.0).link(&d);
        assert_eq!(
            (o.discovered, o.discovery, o.n_nights, o.n_tracklet_nights),
            (true, Some(0), 2, 2)
        );
    }

    #[test]
    fn tracklets_need_count_and_span() {
        // Night 1: two detections 30 min apart; night 2: three detections spanning 60 min.
        let d = [
            det(0, 1, 1.60, 0.0),
            det(1, 1, 1.60 + 30.0 / 1440.0, 1.0),
            det(2, 2, 2.60, 2.0),
            det(3, 2, 2.60 + 30.0 / 1440.0, 3.0),
            det(4, 2, 2.60 + 60.0 / 1440.0, 4.0),
        ];
        let o = rules(2, 45.0, 1, 10.0).link(&d);
        assert_eq!((o.discovery, o.n_tracklet_nights), (Some(4), 1));
        let o = rules(2, 20.0, 2, 10.0).link(&d);
        assert_eq!(o.discovery, Some(3)); // night 1 complete at 1; night 2 at 3
        let o = rules(2, 20.0, 2, 0.5).link(&d);
        assert!(
            !o.discovered,
            "nights 1 and 2 are 1 day apart, outside a 0.5-day window"
        );
    }

    #[test]
    fn window_slides_and_arc_is_required() {
        let d = [
            det(0, 0, 0.6, 0.0),
            det(1, 20, 20.6, 10.0),
            det(2, 25, 25.6, 20.0),
            det(3, 26, 26.6, 30.0),
        ];
        // Nights 0 and 20 are 20 days apart (window 10): the pair (20, 25) completes at index 2.
        assert_eq!(rules(1, 0.0, 2, 10.0).link(&d).discovery, Some(2));
        let mut r = rules(1, 0.0, 2, 10.0);
        r.min_arc_arcsec = 15.0; // arc from night 20 (10″) to index 2 is 10″, to index 3 is 20″
        assert_eq!(r.link(&d).discovery, Some(3));
    }

    #[test]
    fn secured_after_a_year() {
        let d = [det(0, 0, 0.6, 0.0), det(1, 400, 400.6, 0.0)];
        let o = rules(1, 0.0, 1, 10.0).link(&d);
        assert!(o.secured);
        let o = LinkingRules {
            secure_after_days: 500.0,
            ..rules(1, 0.0, 1, 10.0)
        }
        .link(&d);
        assert!(o.discovered && !o.secured);
        assert!(!rules(2, 0.0, 1, 10.0).link(&d).secured);
    }
}
