//! The class of an equation from its singular points (DESIGN.md's table:
//! count singular points with infinity; regular ones and irregular ones by
//! Poincaré rank).

use super::{Apparent, Kind, Place, SingularPoint};
use crate::algebra::Rat;

/// The classes of DESIGN.md's table, by the count of regular singular points
/// and the Poincaré ranks of the irregular ones (∞ counted).
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash)]
pub enum Class {
    /// Two regular singular points.
    Euler,
    /// Three regular singular points (Gauss).
    Hypergeometric,
    /// One regular point and one of rank 1.
    ConfluentHypergeometric,
    /// One regular point and one of rank ½.
    ReducedConfluentHypergeometric,
    /// One irregular point of rank 2.
    ParabolicCylinder,
    /// One irregular point of rank 3/2.
    Airy,
    /// Four regular singular points.
    GeneralHeun,
    /// Two regular points and one of rank 1.
    ConfluentHeun,
    /// Two irregular points of rank 1.
    DoublyConfluentHeun,
    /// One regular point and one of rank 2.
    BiconfluentHeun,
    /// One irregular point of rank 3.
    TriconfluentHeun,
    /// Two regular points and one of rank ½.
    ReducedConfluentHeun,
    /// Irregular points of ranks ½ and 1.
    ReducedDoublyConfluentHeun,
    /// Two irregular points of rank ½.
    DoublyReducedDoublyConfluentHeun,
    /// More than four regular singular points.
    Fuchsian,
    /// Any other arrangement with irregular points.
    Irregular,
}

impl Class {
    /// The id of DESIGN.md, as printed and recorded.
    pub fn id(self) -> &'static str {
        match self {
            Class::Euler => "euler",
            Class::Hypergeometric => "hypergeometric",
            Class::ConfluentHypergeometric => "confluent-hypergeometric",
            Class::ReducedConfluentHypergeometric => "reduced-confluent-hypergeometric",
            Class::ParabolicCylinder => "parabolic-cylinder",
            Class::Airy => "airy",
            Class::GeneralHeun => "general-heun",
            Class::ConfluentHeun => "confluent-heun",
            Class::DoublyConfluentHeun => "doubly-confluent-heun",
            Class::BiconfluentHeun => "biconfluent-heun",
            Class::TriconfluentHeun => "triconfluent-heun",
            Class::ReducedConfluentHeun => "reduced-confluent-heun",
            Class::ReducedDoublyConfluentHeun => "reduced-doubly-confluent-heun",
            Class::DoublyReducedDoublyConfluentHeun => "doubly-reduced-doubly-confluent-heun",
            Class::Fuchsian => "fuchsian",
            Class::Irregular => "irregular",
        }
    }
    /// True for the Heun family (the general equation and its confluences).
    pub fn is_heun(self) -> bool {
        match self {
            Class::GeneralHeun
            | Class::ConfluentHeun
            | Class::DoublyConfluentHeun
            | Class::BiconfluentHeun
            | Class::TriconfluentHeun
            | Class::ReducedConfluentHeun
            | Class::ReducedDoublyConfluentHeun
            | Class::DoublyReducedDoublyConfluentHeun => true,
            Class::Euler
            | Class::Hypergeometric
            | Class::ConfluentHypergeometric
            | Class::ReducedConfluentHypergeometric
            | Class::ParabolicCylinder
            | Class::Airy
            | Class::Fuchsian
            | Class::Irregular => false,
        }
    }
}

impl std::fmt::Display for Class {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        f.write_str(self.id())
    }
}

/// The standard form a canonical reader brings an equation to: the template
/// of a class, or one of the named equations of a class.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash)]
pub enum Form {
    /// The class's own template.
    Of(Class),
    /// Whittaker's equation (DLMF 13.14.1), for the confluent hypergeometric class.
    Whittaker,
    /// Bessel's equation, for the confluent hypergeometric class.
    Bessel,
}

impl Form {
    /// The form's id, as printed and recorded (a class id, or "whittaker", "bessel").
    pub fn id(self) -> &'static str {
        match self {
            Form::Of(c) => c.id(),
            Form::Whittaker => "whittaker",
            Form::Bessel => "bessel",
        }
    }
}

impl std::fmt::Display for Form {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        f.write_str(self.id())
    }
}

fn rank_text(r: &Rat) -> String {
    r.to_string()
}

/// Returns (class, one-line reason, notes).
pub fn classify_points(points: &[SingularPoint]) -> (Class, String, Vec<String>) {
    let mut regular = 0usize;
    let mut irregular: Vec<(Rat, bool)> = Vec::new(); // (rank, at infinity)
    let mut notes = Vec::new();
    let mut apparent = 0usize;
    for p in points {
        let count = match &p.place {
            Place::Roots(f) => f.degree(0) as usize,
            _ => 1,
        };
        match p.kind {
            Kind::Ordinary => {}
            Kind::Regular => {
                regular += count;
                if matches!(p.apparent, Apparent::Yes) {
                    apparent += count;
                }
            }
            Kind::Irregular => {
                for _ in 0..count {
                    irregular.push((p.rank.clone(), matches!(p.place, Place::Infinity)));
                }
            }
        }
    }
    let half = Rat::new(1.into(), 2.into()).expect("nonzero");
    let one = Rat::one();
    let r = |n: i64| Rat::int(n.into());
    let mut ranks: Vec<Rat> = irregular.iter().map(|(x, _)| x.clone()).collect();
    ranks.sort();
    let class = match (regular, ranks.as_slice()) {
        (2, []) => Class::Euler,
        (3, []) => Class::Hypergeometric,
        (1, [x]) if *x == one => Class::ConfluentHypergeometric,
        (1, [x]) if *x == half => Class::ReducedConfluentHypergeometric,
        (0, [x]) if *x == r(2) => Class::ParabolicCylinder,
        (0, [x]) if *x == Rat::new(3.into(), 2.into()).expect("nonzero") => Class::Airy,
        (4, []) => Class::GeneralHeun,
        (2, [x]) if *x == one => Class::ConfluentHeun,
        (0, [x, y]) if *x == one && *y == one => Class::DoublyConfluentHeun,
        (1, [x]) if *x == r(2) => Class::BiconfluentHeun,
        (0, [x]) if *x == r(3) => Class::TriconfluentHeun,
        (2, [x]) if *x == half => Class::ReducedConfluentHeun,
        (0, [x, y]) if *x == half && *y == one => Class::ReducedDoublyConfluentHeun,
        (0, [x, y]) if *x == half && *y == half => Class::DoublyReducedDoublyConfluentHeun,
        (n, []) if n > 4 => Class::Fuchsian,
        _ => Class::Irregular,
    };
    let mut parts = Vec::new();
    if regular > 0 {
        parts.push(format!("{regular} regular"));
    }
    for (x, inf) in &irregular {
        parts.push(format!("rank {}{}", rank_text(x), if *inf { " at ∞" } else { "" }));
    }
    if parts.is_empty() {
        parts.push("no singular points".to_string());
    }
    let reason = parts.join(" + ");
    if apparent > 0 {
        notes.push(format!(
            "{apparent} of the regular points {} apparent (no logarithm); the count of singular points, and so the class, depends on whether they are kept",
            if apparent == 1 { "is" } else { "are" }
        ));
    }
    if class == Class::Fuchsian {
        notes.push(format!("a Fuchsian equation with {regular} regular singular points"));
    }
    (class, reason, notes)
}
