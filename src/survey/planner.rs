//! The cadence planner behind `seine plan`: an honest greedy scheduler.
//!
//! Night by night (DESIGN.md numbering), it keeps the nights the revisit pattern asks for and
//! the weather allows (a seeded random fraction is lost), finds the dark time (Sun below the
//! twilight limit), and fills it with blocks: G fields visited `visits_per_night` times in
//! turn, G chosen so that one pass takes the requested spacing. Fields are picked by fewest
//! nights observed so far, then lowest airmass. Every visit is checked at the start, middle
//! and end of its exposure: Sun below the limit, airmass below the maximum, solar elongation
//! above the minimum; a visit that fails is not scheduled. The depth is the zenith depth less
//! extinction × (airmass − 1), less an optional Moon penalty (low-precision Moon, Krisciunas &
//! Schaefer 1991 sky brightness; see `sky::moon`), with an optional minimum Moon separation.

use std::collections::BTreeMap;

use nalgebra::Vector3;
use rand::RngExt;
use serde::{Deserialize, Serialize};

use super::efficiency::Efficiency;
use super::footprint::Footprint;
use super::linking::LinkingRules;
use super::spec::{EfficiencySpec, FieldSpec, RateWindow};
use crate::error::{Error, Result};
use crate::foundation::units::DEG;
use crate::rng::{Purpose, run_stream};
use crate::sky::earth::EphemerisGrid;
use crate::sky::frames::{ecliptic_to_icrs, icrs_to_ecliptic, lon_lat, radec_to_galactic, unit_vector};
use crate::sky::horizon::{LocalSky, airmass_kasten_young, dark_interval};
use crate::sky::moon::{moon_sky_nl, moon_view, nl_from_mag_arcsec2};
use crate::sky::observer::Site;
use crate::time::{MjdUtc, TimeScale};

/// The plan file (TOML). `[efficiency]`, `[motion]` and `[linking]` are copied into the survey spec.
#[derive(Debug, Clone, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct PlanFile {
    pub plan: PlanSection,
    pub site: Site,
    pub field: FieldSpec,
    pub region: Region,
    #[serde(default)]
    pub revisit: Revisit,
    pub depth: DepthModel,
    #[serde(default)]
    pub efficiency: EfficiencySpec,
    #[serde(default)]
    pub motion: RateWindow,
    #[serde(default)]
    pub linking: LinkingRules,
}

#[derive(Debug, Clone, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct PlanSection {
    pub name: String,
    /// First and last night (DESIGN.md night numbers: the UTC MJD of the local date the night starts).
    pub first_night: i64,
    pub last_night: i64,
    #[serde(default)]
    pub seed: u64,
    #[serde(default = "default_band")]
    pub band: String,
    #[serde(default = "default_twilight")]
    pub sun_alt_max_deg: f64,
    pub exposure_s: f64,
    #[serde(default)]
    pub overhead_s: f64,
    #[serde(default = "default_airmass")]
    pub max_airmass: f64,
    #[serde(default = "default_elongation")]
    pub min_solar_elongation_deg: f64,
    #[serde(default)]
    pub weather_loss: f64,
    #[serde(default = "default_seeing")]
    pub seeing_arcsec: f64,
}

fn default_band() -> String {
    "r".into()
}
fn default_twilight() -> f64 {
    -18.0
}
fn default_airmass() -> f64 {
    2.0
}
/// 90°: the planner points no telescope, but a plan must never send one near the Sun, and
/// distant objects are found near opposition anyway.
fn default_elongation() -> f64 {
    90.0
}
fn default_seeing() -> f64 {
    1.0
}

#[derive(Debug, Clone, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct Region {
    /// fixed (a longitude range) | opposition (centred on the anti-solar longitude each night)
    pub mode: String,
    pub ecliptic_lat_min_deg: f64,
    pub ecliptic_lat_max_deg: f64,
    #[serde(default)]
    pub ecliptic_lon_min_deg: Option<f64>,
    #[serde(default)]
    pub ecliptic_lon_max_deg: Option<f64>,
    #[serde(default)]
    pub opposition_half_width_deg: Option<f64>,
    /// Drop fields with galactic |b| below this (0: keep all).
    #[serde(default)]
    pub avoid_galactic_lat_deg: f64,
}

#[derive(Debug, Clone, Serialize, Deserialize)]
#[serde(deny_unknown_fields, default)]
pub struct Revisit {
    pub visits_per_night: usize,
    pub spacing_min: f64,
    /// Observe every k-th night from the first (used when `night_offsets` is empty).
    pub every_nights: i64,
    /// Or: observe on these offsets (nights) within each cycle of `cycle_nights`.
    pub night_offsets: Vec<i64>,
    pub cycle_nights: i64,
}

impl Default for Revisit {
    fn default() -> Self {
        Revisit {
            visits_per_night: 1,
            spacing_min: 0.0,
            every_nights: 1,
            night_offsets: Vec::new(),
            cycle_nights: 0,
        }
    }
}

#[derive(Debug, Clone, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct DepthModel {
    /// Depth (half-peak magnitude) at the zenith.
    pub zenith_mag: f64,
    #[serde(default)]
    pub extinction_mag_per_airmass: f64,
    /// Lose depth to moonlight (Krisciunas & Schaefer 1991 sky brightness; see sky::moon).
    #[serde(default)]
    pub moon: bool,
    /// Dark-sky brightness at the zenith, V mag/arcsec² (used with `moon`).
    #[serde(default = "default_dark_sky")]
    pub dark_sky_mag_arcsec2: f64,
    /// Never point closer than this to the Moon (0: no limit).
    #[serde(default)]
    pub min_moon_separation_deg: f64,
}

/// 21.7 V mag/arcsec²: a dark site's zenith sky (common practice, no source).
fn default_dark_sky() -> f64 {
    21.7
}

/// One tile of the target region.
#[derive(Debug, Clone)]
pub struct Field {
    pub id: usize,
    pub ra: f64,
    pub dec: f64,
    pub dir: Vector3<f64>,
    pub ecl_lon: f64,
    pub rotation_deg: f64,
}

/// What happened on one night.
#[derive(Debug, Clone, Serialize)]
pub struct NightLog {
    pub night: i64,
    /// observed | weather | not-scheduled | no-dark-time | no-field
    pub status: String,
    pub dark_hours: f64,
    pub used_hours: f64,
    pub n_visits: usize,
}

/// A planned visit, with the quantities the limits were checked against.
#[derive(Debug, Clone, Default)]
pub struct PlannedVisits {
    pub mjd: Vec<f64>,
    pub ra_deg: Vec<f64>,
    pub dec_deg: Vec<f64>,
    pub rotation_deg: Vec<f64>,
    pub depth_mag: Vec<f64>,
    pub field_id: Vec<i64>,
    pub airmass: Vec<f64>,
    pub sun_alt_deg: Vec<f64>,
    pub solar_elongation_deg: Vec<f64>,
    pub moon_penalty_mag: Vec<f64>,
}

pub struct Plan {
    pub file: PlanFile,
    pub footprint: Footprint,
    pub fields: Vec<Field>,
    pub visits: PlannedVisits,
    pub nights: Vec<NightLog>,
}

impl PlanFile {
    /// Check every value; the message names the key.
    pub fn problem(&self) -> Option<String> {
        let p = &self.plan;
        let r = &self.region;
        let v = &self.revisit;
        let checks: Vec<(bool, String)> = vec![
            (
                p.last_night >= p.first_night,
                format!("plan.last_night: expected ≥ first_night ({})", p.first_night),
            ),
            (
                p.last_night - p.first_night <= 3660,
                "plan.last_night: plans longer than ten years are refused".into(),
            ),
            (
                p.first_night >= 41317,
                "plan.first_night: expected a night number (UTC MJD) from 1972 on".into(),
            ),
            (
                (-30.0..=0.0).contains(&p.sun_alt_max_deg),
                format!("plan.sun_alt_max_deg: expected -30..0, found {}", p.sun_alt_max_deg),
            ),
            (
                p.exposure_s > 0.0 && p.exposure_s <= 7200.0,
                format!("plan.exposure_s: expected (0, 7200] s, found {}", p.exposure_s),
            ),
            (
                (0.0..=3600.0).contains(&p.overhead_s),
                format!("plan.overhead_s: expected 0..3600 s, found {}", p.overhead_s),
            ),
            (
                (1.0..=10.0).contains(&p.max_airmass),
                format!("plan.max_airmass: expected 1..10, found {}", p.max_airmass),
            ),
            (
                (30.0..=180.0).contains(&p.min_solar_elongation_deg),
                format!(
                    "plan.min_solar_elongation_deg: expected 30..180 (always enforced), found {}",
                    p.min_solar_elongation_deg
                ),
            ),
            (
                (0.0..1.0).contains(&p.weather_loss),
                format!(
                    "plan.weather_loss: expected a fraction in [0, 1), found {}",
                    p.weather_loss
                ),
            ),
            (
                p.seeing_arcsec > 0.0 && p.seeing_arcsec < 100.0,
                "plan.seeing_arcsec: expected (0, 100) arcsec".into(),
            ),
            (
                matches!(r.mode.as_str(), "fixed" | "opposition"),
                format!("region.mode: expected fixed or opposition, found `{}`", r.mode),
            ),
            (
                -90.0 <= r.ecliptic_lat_min_deg
                    && r.ecliptic_lat_min_deg < r.ecliptic_lat_max_deg
                    && r.ecliptic_lat_max_deg <= 90.0,
                "region.ecliptic_lat_min_deg/max_deg: expected -90 ≤ min < max ≤ 90".into(),
            ),
            (
                r.mode != "fixed" || (r.ecliptic_lon_min_deg.is_some() && r.ecliptic_lon_max_deg.is_some()),
                "region.ecliptic_lon_min_deg/max_deg: required for mode = \"fixed\"".into(),
            ),
            (
                r.mode != "opposition" || r.opposition_half_width_deg.is_some_and(|w| w > 0.0 && w <= 90.0),
                "region.opposition_half_width_deg: required for mode = \"opposition\", in (0, 90]".into(),
            ),
            (
                (0.0..90.0).contains(&r.avoid_galactic_lat_deg),
                "region.avoid_galactic_lat_deg: expected 0..90".into(),
            ),
            (
                (1..=20).contains(&v.visits_per_night),
                format!("revisit.visits_per_night: expected 1..20, found {}", v.visits_per_night),
            ),
            (
                (0.0..=720.0).contains(&v.spacing_min),
                "revisit.spacing_min: expected 0..720 minutes".into(),
            ),
            (v.every_nights >= 1, "revisit.every_nights: expected ≥ 1".into()),
            (
                v.night_offsets.is_empty()
                    || (v.cycle_nights >= 1 && v.night_offsets.iter().all(|&o| (0..v.cycle_nights).contains(&o))),
                "revisit.night_offsets: expected offsets in 0..cycle_nights (cycle_nights ≥ 1)".into(),
            ),
            (
                (5.0..=40.0).contains(&self.depth.zenith_mag),
                "depth.zenith_mag: expected 5..40".into(),
            ),
            (
                (0.0..=2.0).contains(&self.depth.extinction_mag_per_airmass),
                "depth.extinction_mag_per_airmass: expected 0..2".into(),
            ),
            (
                (15.0..=25.0).contains(&self.depth.dark_sky_mag_arcsec2),
                "depth.dark_sky_mag_arcsec2: expected 15..25 V mag/arcsec²".into(),
            ),
            (
                (0.0..=150.0).contains(&self.depth.min_moon_separation_deg),
                "depth.min_moon_separation_deg: expected 0..150".into(),
            ),
            (
                self.field.shape != "mosaic",
                "field.shape: the planner tiles circles or rectangles (use a mosaic in a survey spec)".into(),
            ),
        ];
        if let Some(s) = self.site.problem() {
            return Some(s);
        }
        checks.into_iter().find(|(ok, _)| !ok).map(|(_, m)| m)
    }

    fn wants_night(&self, night: i64) -> bool {
        let d = night - self.plan.first_night;
        let r = &self.revisit;
        if r.night_offsets.is_empty() {
            d % r.every_nights == 0
        } else {
            r.night_offsets.contains(&d.rem_euclid(r.cycle_nights))
        }
    }

    fn weather_lost(&self, night: i64) -> bool {
        // One stream per night number: a night's weather does not depend on the date range.
        let u: f64 = run_stream(self.plan.seed, Purpose::Analysis, night as u64).random();
        u < self.plan.weather_loss
    }
}

/// Position angle (degrees, north through east) of the ecliptic north pole seen from a field.
fn ecliptic_north_pa_deg(ra: f64, dec: f64) -> f64 {
    let pole = ecliptic_to_icrs(&Vector3::new(0.0, 0.0, 1.0));
    let (sa, ca) = ra.sin_cos();
    let (sd, cd) = dec.sin_cos();
    let (e, n) = (Vector3::new(-sa, ca, 0.0), Vector3::new(-sd * ca, -sd * sa, cd));
    pole.dot(&e).atan2(pole.dot(&n)) / DEG
}

/// Tile the region in ecliptic rows so that neighbouring fields leave no gaps: a circle by its
/// inscribed square, a rectangle turned to the ecliptic by its own sides.
pub fn tile(region: &Region, footprint: &Footprint) -> Vec<Field> {
    let (step_lon, step_lat, align) = match footprint {
        Footprint::Circle { radius_deg } => (radius_deg * 2f64.sqrt(), radius_deg * 2f64.sqrt(), false),
        Footprint::Rectangle { width_deg, height_deg } => (*width_deg, *height_deg, true),
        Footprint::Mosaic { .. } => unreachable!("refused by PlanFile::problem"),
    };
    let (lat0, lat1) = (region.ecliptic_lat_min_deg, region.ecliptic_lat_max_deg);
    let (lon0, span) = match (
        region.mode.as_str(),
        region.ecliptic_lon_min_deg,
        region.ecliptic_lon_max_deg,
    ) {
        ("fixed", Some(a), Some(b)) => (a, (b - a).rem_euclid(360.0).max(1e-9)),
        _ => (0.0, 360.0),
    };
    let n_rows = ((lat1 - lat0) / step_lat).ceil().max(1.0) as usize;
    let row_h = (lat1 - lat0) / n_rows as f64;
    let mut fields = Vec::new();
    for i in 0..n_rows {
        let beta = lat0 + (i as f64 + 0.5) * row_h;
        let widest = (beta.abs() - 0.5 * row_h).max(0.0);
        let n_lon = (span * (widest * DEG).cos() / step_lon).ceil().max(1.0) as usize;
        for j in 0..n_lon {
            let lam = (lon0 + (j as f64 + 0.5) * span / n_lon as f64).rem_euclid(360.0);
            let dir = ecliptic_to_icrs(&unit_vector(lam * DEG, beta * DEG));
            let (ra, dec) = lon_lat(&dir);
            if radec_to_galactic(ra, dec).1.abs() < region.avoid_galactic_lat_deg * DEG {
                continue;
            }
            let rotation_deg = if align { ecliptic_north_pa_deg(ra, dec) } else { 0.0 };
            fields.push(Field {
                id: fields.len(),
                ra,
                dec,
                dir,
                ecl_lon: lam * DEG,
                rotation_deg,
            });
        }
    }
    fields
}

/// The checks at one instant: (ok, airmass, sun altitude deg, elongation deg).
fn limits_at(sky: &LocalSky, f: &Field, p: &PlanSection) -> (bool, f64, f64, f64) {
    let sun_alt = sky.sun_altitude() / DEG;
    let alt = sky.altitude(&f.dir);
    let x = if alt > 0.0 {
        airmass_kasten_young(alt)
    } else {
        f64::INFINITY
    };
    let elong = sky.solar_elongation(&f.dir) / DEG;
    (
        sun_alt < p.sun_alt_max_deg && x <= p.max_airmass && elong >= p.min_solar_elongation_deg,
        x,
        sun_alt,
        elong,
    )
}

struct Scheduler<'a> {
    file: &'a PlanFile,
    grid: EphemerisGrid,
    fields: Vec<Field>,
    nights_seen: Vec<usize>,
    last_night: Vec<i64>,
    out: PlannedVisits,
}

impl Scheduler<'_> {
    /// The local sky at a UTC epoch (the plan's first night was checked to be one UTC serves).
    fn sky(&self, utc: f64) -> Result<LocalSky> {
        let utc = MjdUtc(utc);
        LocalSky::new(&self.file.site, utc, &self.grid.at(utc.to_tdb()?.0))
    }

    fn slot_days(&self) -> f64 {
        (self.file.plan.exposure_s + self.file.plan.overhead_s) / 86400.0
    }

    /// Fields of the region this night (opposition mode: within the half width of the anti-solar longitude).
    fn in_region(&self, midnight: f64) -> Result<Vec<usize>> {
        let r = &self.file.region;
        let Some(w) = r.opposition_half_width_deg.filter(|_| r.mode == "opposition") else {
            return Ok((0..self.fields.len()).collect());
        };
        let anti = lon_lat(&icrs_to_ecliptic(&(-self.sky(midnight)?.sun_dir))).0;
        let d = |lon: f64| {
            ((lon - anti + std::f64::consts::PI).rem_euclid(std::f64::consts::TAU) - std::f64::consts::PI).abs()
        };
        Ok((0..self.fields.len())
            .filter(|&i| d(self.fields[i].ecl_lon) <= w * DEG)
            .collect())
    }

    /// Choose up to `g` fields observable at both `t0` and `t1`, by fewest nights then lowest airmass.
    fn choose(&self, cands: &[usize], t0: f64, t1: f64, g: usize, night: i64) -> Result<Vec<usize>> {
        let (s0, s1) = (self.sky(t0)?, self.sky(t1)?);
        let p = &self.file.plan;
        let mut ok: Vec<(usize, usize, f64)> = cands
            .iter()
            .filter(|&&i| self.last_night[i] != night)
            .filter_map(|&i| {
                let (a, x, _, _) = limits_at(&s0, &self.fields[i], p);
                (a && limits_at(&s1, &self.fields[i], p).0).then_some((i, self.nights_seen[i], x))
            })
            .collect();
        ok.sort_by(|a, b| a.1.cmp(&b.1).then(a.2.total_cmp(&b.2)).then(a.0.cmp(&b.0)));
        Ok(ok.into_iter().take(g).map(|c| c.0).collect())
    }

    /// Add a visit of field `i` starting at `start` if every limit holds at start, middle and end.
    fn try_visit(&mut self, i: usize, start: f64) -> Result<bool> {
        let p = &self.file.plan;
        let exp = p.exposure_s / 86400.0;
        let f = &self.fields[i];
        let checks: Vec<(bool, f64, f64, f64)> = [start, start + 0.5 * exp, start + exp]
            .iter()
            .map(|&t| Ok(limits_at(&self.sky(t)?, f, p)))
            .collect::<Result<_>>()?;
        if !checks.iter().all(|c| c.0) {
            return Ok(false);
        }
        let (_, x, sun, elong) = checks[1];
        let Some(moon_mag) = self.moon_penalty(i, start + 0.5 * exp)? else {
            return Ok(false);
        };
        let o = &mut self.out;
        o.mjd.push(start + 0.5 * exp);
        o.ra_deg.push(f.ra / DEG);
        o.dec_deg.push(f.dec / DEG);
        o.rotation_deg.push(f.rotation_deg);
        let d = &self.file.depth;
        o.depth_mag
            .push(d.zenith_mag - d.extinction_mag_per_airmass * (x - 1.0) - moon_mag);
        o.moon_penalty_mag.push(moon_mag);
        o.field_id.push(f.id as i64);
        o.airmass.push(x);
        o.sun_alt_deg.push(sun);
        o.solar_elongation_deg.push(elong);
        Ok(true)
    }

    /// The Moon's depth penalty (mag) for field `i` at `t`, or `None` if the field is too near the Moon.
    fn moon_penalty(&self, i: usize, t: f64) -> Result<Option<f64>> {
        let d = &self.file.depth;
        if !d.moon && d.min_moon_separation_deg <= 0.0 {
            return Ok(Some(0.0));
        }
        let sky = self.sky(t)?;
        let f = &self.fields[i];
        let moon = moon_view(MjdUtc(t), &sky.site_geo, &sky.sun_dir)?;
        let rho = crate::sky::frames::separation(&moon.dir, &f.dir) / DEG;
        if rho < d.min_moon_separation_deg {
            return Ok(None);
        }
        if !d.moon {
            return Ok(Some(0.0));
        }
        let z = |dir: &Vector3<f64>| 90.0 - sky.altitude(dir) / DEG;
        let b = moon_sky_nl(
            moon.phase_deg,
            rho,
            z(&moon.dir),
            z(&f.dir),
            d.extinction_mag_per_airmass,
        );
        let b0 = nl_from_mag_arcsec2(d.dark_sky_mag_arcsec2);
        Ok(Some(1.25 * ((b0 + b) / b0).log10()))
    }

    /// Fill one night's dark time with blocks; returns the number of visits.
    fn night(&mut self, night: i64, dusk: f64, dawn: f64) -> Result<usize> {
        let slot = self.slot_days();
        let passes = self.file.revisit.visits_per_night;
        let g_full = if passes > 1 {
            ((self.file.revisit.spacing_min / 1440.0 / slot).ceil() as usize).max(1)
        } else {
            ((30.0 / 1440.0 / slot).floor() as usize).max(1) // single visits: half-hour batches
        };
        let cands = self.in_region(0.5 * (dusk + dawn))?;
        let before = self.out.mjd.len();
        let mut t = dusk;
        while t + slot <= dawn {
            let room = ((dawn - t) / slot).floor() as usize;
            let g = g_full.min(room / passes);
            if g == 0 {
                break;
            }
            let block_end = t + (passes * g) as f64 * slot;
            let chosen = self.choose(
                &cands,
                t,
                block_end - slot + self.file.plan.exposure_s / 86400.0,
                g,
                night,
            )?;
            if chosen.is_empty() {
                t += slot.max(5.0 / 1440.0); // nothing up: wait a few minutes
                continue;
            }
            for pass in 0..passes {
                for (k, &i) in chosen.iter().enumerate() {
                    let start = t + (pass * g + k) as f64 * slot;
                    if self.try_visit(i, start)? && self.last_night[i] != night {
                        self.last_night[i] = night;
                        self.nights_seen[i] += 1;
                    }
                }
            }
            t = block_end;
        }
        Ok(self.out.mjd.len() - before)
    }
}

/// Make the plan: tile, then schedule night by night.
pub fn make_plan(file: PlanFile) -> Result<Plan> {
    make_plan_with_progress(file, false)
}

/// `make_plan`, with a progress bar over the nights on a terminal when `progress`.
pub fn make_plan_with_progress(file: PlanFile, progress: bool) -> Result<Plan> {
    if let Some(p) = file.problem() {
        return Err(Error::input(p));
    }
    let (footprint, _) = file.field.footprint()?;
    let fields = tile(&file.region, &footprint);
    if fields.is_empty() {
        return Err(Error::input("region: no field is left after the galactic-plane cut"));
    }
    let (first, last) = (file.plan.first_night, file.plan.last_night);
    let lo = MjdUtc(first as f64).to_tdb()?.0;
    let grid = EphemerisGrid::covering(lo - 1.0, lo + (last - first) as f64 + 3.0);
    let n = fields.len();
    let mut s = Scheduler {
        file: &file,
        grid,
        fields,
        nights_seen: vec![0; n],
        last_night: vec![i64::MIN; n],
        out: PlannedVisits::default(),
    };
    let mut nights = Vec::new();
    let bar = crate::progress::bar((last - first + 1) as u64, "nights", progress);
    for night in first..=last {
        nights.push(plan_night(&mut s, night)?);
        if let Some(b) = &bar {
            b.inc(1);
        }
    }
    if let Some(b) = bar {
        b.finish_and_clear();
    }
    let Scheduler { fields, out, .. } = s;
    if out.mjd.is_empty() {
        return Err(Error::input(no_visit_reason(&nights)));
    }
    Ok(Plan {
        file,
        footprint,
        fields,
        visits: out,
        nights,
    })
}

/// Why a plan has no visit, from its nights' fates (the most common one first).
fn no_visit_reason(nights: &[NightLog]) -> String {
    let mut fates: BTreeMap<&str, usize> = BTreeMap::new();
    for n in nights {
        *fates.entry(n.status.as_str()).or_default() += 1;
    }
    let mut fates: Vec<_> = fates.into_iter().collect();
    fates.sort_by(|a, b| b.1.cmp(&a.1));
    let told: Vec<String> = fates.iter().map(|(s, k)| format!("{k} {s}")).collect();
    format!(
        "the plan makes no visit (its {} nights: {}); widen the nights, the region or the \
         altitude and Sun limits",
        nights.len(),
        told.join(", ")
    )
}

fn plan_night(s: &mut Scheduler, night: i64) -> Result<NightLog> {
    let mut log = NightLog {
        night,
        status: "observed".into(),
        dark_hours: 0.0,
        used_hours: 0.0,
        n_visits: 0,
    };
    let limit = s.file.plan.sun_alt_max_deg;
    let dark = dark_interval(&s.file.site, night, limit, |t| Ok(s.sky(t)?.sun_altitude()))?;
    let Some((dusk, dawn)) = dark else {
        log.status = "no-dark-time".into();
        return Ok(log);
    };
    log.dark_hours = (dawn - dusk) * 24.0;
    if !s.file.wants_night(night) {
        log.status = "not-scheduled".into();
    } else if s.file.weather_lost(night) {
        log.status = "weather".into();
    } else {
        log.n_visits = s.night(night, dusk, dawn)?;
        log.used_hours = log.n_visits as f64 * s.slot_days() * 24.0;
        if log.n_visits == 0 {
            log.status = "no-field".into();
        }
    }
    Ok(log)
}

/// The survey spec that goes with a plan's visits (TOML text).
pub fn spec_toml(file: &PlanFile, plan_path: &std::path::Path, visits_file_name: &str) -> Result<String> {
    let spec = super::spec::SurveySpecFile {
        survey: super::spec::SurveySection {
            name: file.plan.name.clone(),
            visits: visits_file_name.to_string(),
            time_scale: TimeScale::Utc,
            reference_band: file.plan.band.clone(),
        },
        site: Some(file.site),
        field: file.field.clone(),
        efficiency: file.efficiency.clone(),
        motion: file.motion,
        linking: file.linking.clone(),
        measurement: None,
        crowding: None,
    };
    let body = toml::to_string(&spec).map_err(|e| Error::io(format!("cannot write the survey spec: {e}")))?;
    let name = plan_path
        .file_name()
        .map(|n| n.to_string_lossy().into_owned())
        .unwrap_or_default();
    Ok(format!(
        "# Survey spec written by `seine plan` from plan \"{}\" ({name}).\n\
         # Regenerate it and its visits with: seine plan --plan {name} --out {visits_file_name}\n{body}",
        file.plan.name
    ))
}

/// Check the pass-through tables as the survey spec will (so a bad plan fails before any work).
pub fn check_passthrough(file: &PlanFile) -> Result<(Efficiency, BTreeMap<String, Efficiency>)> {
    if let Some(p) = file.linking.problem() {
        return Err(Error::input(p));
    }
    let m = file.motion;
    if !(m.min_rate_arcsec_per_hr >= 0.0 && m.max_rate_arcsec_per_hr >= m.min_rate_arcsec_per_hr) {
        return Err(Error::input(
            "motion: expected 0 ≤ min_rate_arcsec_per_hr ≤ max_rate_arcsec_per_hr",
        ));
    }
    file.efficiency.build_all()
}
