//! The report's section of a hideout run (`seine hideout`, one of its shards, or their merge):
//! where a planet that the surveys did not find could still be, how much of the prior they
//! excluded against H and a, how bright and fast the survivors are, and the fields to search
//! next, under the run's own conclusion. Named by its directory, as every section.

use std::path::Path;

use super::figures::hideout as fig;
use super::inputs::HideoutRun;
use super::section::{Section, Table, header, href, label, run_prefix};
use super::tables::FieldRow;
use crate::error::Result;

/// The section of the hideout run `run`, found under the report's directory `dir`.
pub fn section(dir: &Path, run: &HideoutRun) -> Result<Section> {
    let name = label(dir, &run.dir);
    let prefix = run_prefix(dir, &run.dir);
    let s = &run.summary;
    let draws = format!(
        "{} draws of the prior ({:.0} effective at their weights)",
        s.n_draws, s.n_effective
    );
    let note = format!("From {}: {draws}.", href(dir, &run.dir));
    let map_note = format!(
        "The 68 % region covers {:.0} deg² ({} cells) and the 95 % region {:.0} deg² ({} \
         cells). Positions at MJD {:.1} (UTC), seen from the geocentre. {note}",
        s.region_68.area_sq_deg, s.region_68.n_cells, s.region_95.area_sq_deg, s.region_95.n_cells, s.run.epoch_mjd_utc
    );
    let mut figures = vec![
        fig::posterior_map("sky_map", &name, &run.sky, &run.coverage, &map_note)?,
        fig::excluded_fraction("h_mag", &run.excluded, &note)?,
        fig::excluded_fraction("a_au", &run.excluded, &note)?,
        fig::survivors_magnitude(&run.magnitudes, &note)?,
        fig::survivors_rate(&run.sky, &note)?,
    ];
    for f in &mut figures {
        f.stem = format!("{prefix}hideout_{}", f.stem);
    }
    let shard = match &s.run.shard {
        Some(k) => format!(
            "Shard {k} of a run: its tables hold this shard's draws only (seine merge adds the \
             shards into the run's answer). "
        ),
        None => String::new(),
    };
    Ok(Section {
        title: format!("Where a planet could still hide: {name}"),
        intro: format!(
            "{shard}From {}: {} draws ({:.0} effective at their weights) of the prior {} through \
             {}, judged by what the surveys would have found. {}",
            href(dir, &run.dir),
            s.n_draws,
            s.n_effective,
            s.run.prior,
            s.run.surveys.join(", "),
            s.conclusion
        ),
        // No fields when no draw survives (the conclusion says so).
        tables: [fields_table(dir, run), surveys_table(run)]
            .into_iter()
            .filter(|t| !t.rows.is_empty())
            .collect(),
        figures,
        ..Default::default()
    })
}

/// The ranked fields of `fields.*`, all of them, linked to the file.
fn fields_table(dir: &Path, run: &HideoutRun) -> Table {
    let (path, rows) = &run.fields;
    let link = href(dir, path);
    let radius = rows.first().map_or(run.summary.run.field_radius_deg, |r| r.radius_deg);
    let num = |x: f64, digits: usize| {
        if x.is_finite() {
            format!("{x:.digits$}")
        } else {
            "–".to_string()
        }
    };
    Table {
        caption: format!(
            "The {} fields of radius {radius}° ranked for the next search, best first (from \
             {link}): the centre in RA and Dec (ICRS) and in ecliptic longitude λ and latitude β \
             (J2000), the area of the sky cells whose centres lie in the field, the posterior \
             probability in those of its cells no better field took (p) and summed down the \
             list, the depth that reaches 90 % of the survivors there and their mean rate of \
             motion, at the map's epoch.",
            rows.len()
        ),
        header: header(&[
            "rank",
            "RA (deg)",
            "Dec (deg)",
            "λ (deg)",
            "β (deg)",
            "area (deg²)",
            "p",
            "p cumulative",
            "depth 90 % (mag)",
            "mean rate (″/h)",
        ]),
        rows: rows
            .iter()
            .map(|r: &FieldRow| {
                vec![
                    r.rank.to_string(),
                    num(r.ra_deg, 2),
                    num(r.dec_deg, 2),
                    num(r.ecl_lon_deg, 2),
                    num(r.ecl_lat_deg, 2),
                    num(r.area_sq_deg, 1),
                    format!("{:.2}%", 100.0 * r.p_field),
                    format!("{:.2}%", 100.0 * r.p_cumulative),
                    num(r.depth_90_mag, 2),
                    num(r.mean_rate_arcsec_per_hr, 2),
                ]
            })
            .collect(),
        link: Some((format!("all columns ({link})"), link.clone())),
    }
}

/// What each survey alone would have found of the prior (weighted), from `summary.json`.
fn surveys_table(run: &HideoutRun) -> Table {
    let s = &run.summary;
    let mut rows: Vec<Vec<String>> = s
        .per_survey
        .iter()
        .map(|p| vec![p.survey.clone(), format!("{:.2}%", 100.0 * p.discovered_fraction)])
        .collect();
    rows.push(vec![
        "any of them".into(),
        format!(
            "{:.2}% ± {:.2}%",
            100.0 * s.excluded_fraction,
            100.0 * s.excluded_fraction_err
        ),
    ]);
    Table {
        caption: "The share of the prior's weight each survey would have found on its own, and \
                  any of them (the excluded fraction, ± its standard error)."
            .into(),
        header: header(&["survey", "would have found"]),
        rows,
        link: None,
    }
}
