//! Methods: the players under test.
//!
//! A method is an ask/tell object: [`Method::next`] writes its next query (or stops with
//! an output), [`Method::observe`] tells it the answer. The game loop
//! ([`crate::game`]) is the only place that counts queries. An external program is just
//! a `Method` whose `next` reads a line and whose `observe` writes one.
//!
//! To add a method: write `src/method/<name>.rs` with a type implementing [`Method`] and
//! an `INFO` entry ([`MethodInfo`]: its families, whether it is deterministic, how to
//! build it), name its published source in the doc comment, make it decide "empty" only
//! when its own information proves that no rho-ball fits strictly inside what it knows,
//! and list the entry in [`METHODS`].

pub mod accelerated;
pub mod analytic_center;
pub mod centroid;
pub mod coordinate_search;
mod cut_model;
pub mod ellipsoid;
pub mod enumerate;
pub mod external;
pub mod fibre_bisection;
pub mod gradient;
pub mod heavy_ball;
pub mod kelley;
pub mod lattice_centerpoint;
pub mod level;
pub mod midpoint;
pub mod mixed_centerpoint;
pub mod random;
pub mod random_direction;
pub mod sampled_centroid;
pub mod subgradient;

#[cfg(test)]
mod test_support;

use crate::class::{Class, LargeScaleClass, Promise};
use crate::error::Error;
use crate::oracle::{Answer, Output, Step};
use crate::transcript::Ending;

/// A player under test.
pub trait Method {
    /// The registered name (or the external program's name).
    fn name(&self) -> &str;
    /// Next move: write a query into `query` (whose length is the class's query
    /// dimension) and return [`Step::Query`], or stop with [`Step::Output`].
    fn next(&mut self, query: &mut [f64]) -> Result<Step, Error>;
    /// Learn the answer to the last query.
    fn observe(&mut self, query: &[f64], answer: &Answer) -> Result<(), Error>;
    /// An independent copy of the method in its current state, so that a search
    /// ([`crate::hunt`]) can continue one game in several ways; `None` (the default) when
    /// the method cannot be copied, and then it is replayed from scratch instead.
    fn fork(&self) -> Option<Box<dyn Method + Send>> {
        None
    }
    /// Told once how the game ended, after its last move (an external program gets its
    /// final `over` message here); the default does nothing.
    fn end(&mut self, ending: &Ending) {
        let _ = ending;
    }
}

/// A restriction of a method within its families: `Err` says why it does not play a class.
pub type Restriction = fn(&Class) -> Result<(), String>;

/// Builds a method for a class, seeded where it is randomized.
pub type Builder = fn(&Class, u64) -> Result<Box<dyn Method + Send>, Error>;

/// A registered built-in method.
pub struct MethodInfo {
    /// Name used on the command line and in files.
    pub name: &'static str,
    /// One line: the update and its published source.
    pub description: &'static str,
    /// Whether it is deterministic (no seed).
    pub deterministic: bool,
    /// Whether its iterates stay in x_0 plus the span of the past gradients (the
    /// large-scale instances bind such methods; docs/theory.md §3).
    pub span: bool,
    /// The families of classes it plays.
    pub families: &'static [&'static str],
    /// A further restriction within those families (`Err` says why), if any.
    pub restriction: Option<Restriction>,
    /// Builds it for a class of one of its families, seeded where it is randomized.
    pub build: Builder,
}

/// Every built-in method, grouped by family. To add one: write `src/method/<name>.rs`
/// with its type and an `INFO` entry, and list the entry here.
pub const METHODS: &[MethodInfo] = &[
    midpoint::INFO,
    ellipsoid::INFO,
    random::INFO,
    centroid::INFO,
    sampled_centroid::INFO,
    analytic_center::INFO,
    subgradient::INFO,
    subgradient::DECAYING,
    kelley::INFO,
    level::INFO,
    enumerate::INFO,
    lattice_centerpoint::INFO,
    fibre_bisection::INFO,
    mixed_centerpoint::INFO,
    subgradient::UNCONSTRAINED,
    gradient::INFO,
    accelerated::INFO,
    heavy_ball::INFO,
    coordinate_search::INFO,
    random_direction::INFO,
];

/// The registry entry called `name`.
pub fn info(name: &str) -> Option<&'static MethodInfo> {
    METHODS.iter().find(|m| m.name == name)
}

/// Whether built-in method `name` supports `class`; `Err` says why not (and which
/// family to play it in).
pub fn supports(name: &str, class: &Class) -> Result<(), String> {
    let Some(entry) = info(name) else {
        return Err(format!("unknown method {name:?}"));
    };
    let family = class.family_name();
    if !entry.families.contains(&family) {
        return Err(family_hint(name, entry.families));
    }
    match entry.restriction {
        Some(check) => check(class),
        None => Ok(()),
    }
}

/// Builds the built-in method `name` for `class`, seeded with `seed` where it is
/// randomized.
pub fn build(name: &str, class: &Class, seed: u64) -> Result<Box<dyn Method + Send>, Error> {
    let Some(entry) = info(name) else {
        return Err(Error::UnknownMethod { name: name.into() });
    };
    supports(name, class).map_err(|reason| Error::Unsupported {
        what: format!("method {name:?}"),
        reason,
    })?;
    (entry.build)(class, seed)
}

fn family_hint(name: &str, families: &[&str]) -> String {
    let list = families.join(" or ");
    let flag = families
        .first()
        .map_or(String::new(), |f| format!(" (pass --class {f})"));
    format!("{name} plays the {list} family{flag}")
}

/// The error for a method built for a class outside its families.
pub(crate) fn wrong_family(name: &str, families: &[&str]) -> Error {
    Error::Unsupported {
        what: format!("method {name:?}"),
        reason: family_hint(name, families),
    }
}

/// Restriction of the pure integer methods: a lattice class without continuous part, with
/// at most [`enumerate::MAX_LATTICE_POINTS`] lattice points (they list them).
pub(crate) fn pure_integer_only(class: &Class) -> Result<(), String> {
    match class {
        Class::Lattice(c) if c.cont_dim > 0 => {
            Err("it plays pure integer classes (d = 0) only".into())
        }
        Class::Lattice(c) if c.lattice_count() > enumerate::MAX_LATTICE_POINTS => Err(format!(
            "the integer box has {} lattice points, more than the {} it lists",
            c.lattice_count(),
            enumerate::MAX_LATTICE_POINTS
        )),
        _ => Ok(()),
    }
}

/// Restriction of the smooth large-scale methods.
pub(crate) fn smooth_only(class: &Class) -> Result<(), String> {
    match class {
        Class::LargeScale(c) if matches!(c.function, LargeScaleClass::Nonsmooth { .. }) => {
            Err("it needs a smooth class (the smooth or strongly-convex large-scale class)".into())
        }
        _ => Ok(()),
    }
}

/// Restriction of the nonsmooth large-scale methods.
pub(crate) fn nonsmooth_only(class: &Class) -> Result<(), String> {
    match class {
        Class::LargeScale(c) if !matches!(c.function, LargeScaleClass::Nonsmooth { .. }) => {
            Err("it plays the nonsmooth large-scale class".into())
        }
        _ => Ok(()),
    }
}

/// What a method outputs once its own information proves that no rho-ball fits inside
/// what it knows: "empty" when the class allows it; under the nonempty promise the
/// promise contradicts that proof, and the method answers `guess` (its model's centre).
pub(crate) fn give_up(promise: Promise, guess: impl FnOnce() -> Vec<f64>) -> Output {
    match promise {
        Promise::MayBeEmpty => Output::Empty,
        Promise::Nonempty => Output::Point { point: guess() },
    }
}

/// The error a polytope-model method returns when a cut at its query left its model
/// unchanged. Its queries lie strictly inside the model, so a valid cut through or beyond
/// one always changes it, unless outward rounding has swallowed the cut: the model has
/// reached floating-point resolution, and a deterministic method would repeat the same
/// query forever.
pub(crate) fn unchanged(method: &str) -> Error {
    Error::MethodFailed {
        method: method.into(),
        reason: "the last cut left the model unchanged: its outward rounding reached \
                 floating-point resolution (or the cut does not exclude the query)"
            .into(),
    }
}

/// Re-labels a geometry error ([`Error::MethodFailed`] from the polytope model or the
/// sampler) as a failure of `method`; other errors pass through.
pub(crate) fn blame(error: Error, method: &str) -> Error {
    match error {
        Error::MethodFailed {
            method: part,
            reason,
        } => Error::MethodFailed {
            method: method.into(),
            reason: format!("{part}: {reason}"),
        },
        other => other,
    }
}

/// The value and (sub)gradient of a first-order answer, as `f64`, into `gradient`.
pub(crate) fn read_answer(
    method: &str,
    answer: &Answer,
    gradient: &mut Vec<f64>,
) -> Result<f64, Error> {
    let Answer::FirstOrder(fo) = answer else {
        return Err(Error::MethodFailed {
            method: method.into(),
            reason: "needs first-order answers (value and gradient)".into(),
        });
    };
    gradient.clear();
    gradient.extend(fo.subgradient.iter().map(|g| g.to_f64()));
    Ok(fo.value.to_f64())
}

/// The smoothness beta and strong convexity mu (0 for the smooth class) of a smooth
/// class; `None` for the nonsmooth class.
pub(crate) fn smoothness(class: &LargeScaleClass) -> Option<(f64, f64)> {
    match *class {
        LargeScaleClass::Nonsmooth { .. } => None,
        LargeScaleClass::Smooth { smoothness, .. } => Some((smoothness, 0.0)),
        LargeScaleClass::StronglyConvex {
            smoothness,
            strong_convexity,
            ..
        } => Some((smoothness, strong_convexity)),
    }
}
