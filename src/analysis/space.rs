//! The observable space of a model comparison: which element-derived quantities, how each is
//! handled by a density (a log for scale variables, reflection at hard bounds, a circle for
//! angles), and the values of a table's rows in it. See methods.md, "Densities of detected
//! objects".

use std::f64::consts::TAU;

use crate::error::{Error, Result};
use crate::orbit::Elements;
use crate::population::objects::ObjectTable;

/// How a density treats one coordinate.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum Coordinate {
    /// A positive scale variable, smoothed in ln x.
    Log,
    /// A variable with hard bounds, smoothed with reflection at both.
    Bounded { lo: f64, hi: f64 },
    /// Unbounded.
    Linear,
    /// An angle in degrees, periodic.
    Angle,
}

/// The quantities a space can be built from.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Observable {
    A,
    E,
    Q,
    Aphelion,
    Inc,
    Node,
    Argperi,
    Varpi,
    H,
}

impl Observable {
    pub const ALL: [Observable; 9] = [
        Observable::A,
        Observable::E,
        Observable::Q,
        Observable::Aphelion,
        Observable::Inc,
        Observable::Node,
        Observable::Argperi,
        Observable::Varpi,
        Observable::H,
    ];

    pub fn name(self) -> &'static str {
        match self {
            Observable::A => "a_au",
            Observable::E => "e",
            Observable::Q => "q_au",
            Observable::Aphelion => "Q_au",
            Observable::Inc => "inc_deg",
            Observable::Node => "node_deg",
            Observable::Argperi => "argperi_deg",
            Observable::Varpi => "varpi_deg",
            Observable::H => "h_mag",
        }
    }

    pub fn coordinate(self) -> Coordinate {
        match self {
            Observable::A | Observable::Q | Observable::Aphelion => Coordinate::Log,
            Observable::E => Coordinate::Bounded { lo: 0.0, hi: 1.0 },
            Observable::Inc => Coordinate::Bounded { lo: 0.0, hi: 180.0 },
            Observable::H => Coordinate::Linear,
            Observable::Node | Observable::Argperi | Observable::Varpi => Coordinate::Angle,
        }
    }

    /// The value for row i of a table (angles in [0°, 360°)).
    pub fn value(self, t: &ObjectTable, i: usize) -> f64 {
        self.value_of(&t.elements[i], t.h_mag[i])
    }

    /// The value for an object of elements `el` and absolute magnitude `h_mag`.
    pub fn value_of(self, el: &Elements, h_mag: f64) -> f64 {
        let deg = |x: f64| x.rem_euclid(TAU).to_degrees();
        match self {
            Observable::A => el.a_au,
            Observable::E => el.e,
            Observable::Q => el.q_au(),
            Observable::Aphelion => el.aphelion_au(),
            Observable::Inc => el.inc_rad.to_degrees(),
            Observable::Node => deg(el.node_rad),
            Observable::Argperi => deg(el.argperi_rad),
            Observable::Varpi => deg(el.node_rad + el.argperi_rad),
            Observable::H => h_mag,
        }
    }
}

/// An ordered list of distinct observables.
#[derive(Debug, Clone, PartialEq)]
pub struct Space {
    pub observables: Vec<Observable>,
}

impl Space {
    /// Parse `--space`: comma-separated names, each once.
    pub fn parse(s: &str) -> Result<Self> {
        let names: Vec<&str> = s.split(',').map(str::trim).collect();
        let known = || Observable::ALL.iter().map(|o| o.name()).collect::<Vec<_>>().join(", ");
        let mut observables = Vec::new();
        for n in &names {
            if n.is_empty() {
                return Err(Error::input(format!(
                    "--space `{s}`: an empty name; expected comma-separated observables from {}",
                    known()
                )));
            }
            let o = Observable::ALL.into_iter().find(|o| o.name() == *n).ok_or_else(|| {
                Error::input(format!(
                    "--space: unknown observable `{n}`; expected one of {}",
                    known()
                ))
            })?;
            if observables.contains(&o) {
                return Err(Error::input(format!(
                    "--space `{s}`: `{n}` is named twice; a density needs each observable once"
                )));
            }
            observables.push(o);
        }
        Ok(Space { observables })
    }

    pub fn dim(&self) -> usize {
        self.observables.len()
    }

    pub fn names(&self) -> Vec<&'static str> {
        self.observables.iter().map(|o| o.name()).collect()
    }

    pub fn coordinates(&self) -> Vec<Coordinate> {
        self.observables.iter().map(|o| o.coordinate()).collect()
    }

    /// The points of rows `rows` of a table, in the observables' own units.
    pub fn points(&self, t: &ObjectTable, rows: &[usize]) -> Vec<Vec<f64>> {
        rows.iter().map(|&i| self.point(&t.elements[i], t.h_mag[i])).collect()
    }

    /// The point of an object of elements `el` and absolute magnitude `h_mag`.
    pub fn point(&self, el: &Elements, h_mag: f64) -> Vec<f64> {
        self.observables.iter().map(|o| o.value_of(el, h_mag)).collect()
    }
}
