//! The detection decision of one survey for one object, event by event in visit order.
//!
//! An in-field event is detected when three things hold: the source is on live detector
//! (outside every dead region of the visit's focal plane: `live_area`), it survives the
//! random loss (the first uniform draw below `random_live_fraction`), and the efficiency
//! says so. For an efficiency per visit that is the event's second uniform draw below its
//! `p_detect`. For an efficiency per tracklet it is the night's verdict: the second draw of
//! the object's first in-field event of that night (and efficiency class) against that
//! event's `p_detect`, shared by every event of the class that night; so the object is
//! found that night as a tracklet with the tracklet efficiency, if enough of its events fall
//! on live detector. The engine takes both draws for every in-field event, used or not, so
//! that any candidate strategy gives identical draws.

use super::Survey;
use super::efficiency::Scope;

/// One survey's decisions for one object (the nights' verdicts kept between events).
pub struct Decisions<'a> {
    survey: &'a Survey,
    /// Tonight's verdicts of the tracklet efficiencies: (night, efficiency class, verdict).
    verdicts: Vec<(i64, u16, bool)>,
}

impl Survey {
    /// A fresh pass of decisions for one object.
    pub fn decisions(&self) -> Decisions<'_> {
        Decisions {
            survey: self,
            verdicts: Vec::new(),
        }
    }
}

impl Decisions<'_> {
    /// Whether the in-field event at `visit`, with the source at (ra, dec) radians and
    /// detection probability `p_detect`, is detected; `u` is the event's two uniform draws.
    pub fn detects(&mut self, visit: usize, (ra_rad, dec_rad): (f64, f64), p_detect: f64, u: (f64, f64)) -> bool {
        let s = self.survey;
        let efficient = match s.efficiency.for_class(s.visits.efficiency_class[visit]).scope {
            Scope::Visit => u.1 < p_detect,
            Scope::Tracklet => self.nights_verdict(visit, u.1 < p_detect),
        };
        efficient && u.0 < s.live.random_live_fraction && s.in_live_area(visit, ra_rad, dec_rad)
    }

    /// The verdict of the visit's night and class: `draw` if this is its first event.
    fn nights_verdict(&mut self, visit: usize, draw: bool) -> bool {
        let (night, class) = (
            self.survey.visits.night[visit],
            self.survey.visits.efficiency_class[visit],
        );
        self.verdicts.retain(|v| v.0 == night);
        match self.verdicts.iter().find(|v| v.1 == class) {
            Some(v) => v.2,
            None => {
                self.verdicts.push((night, class, draw));
                draw
            }
        }
    }
}
