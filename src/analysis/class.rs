//! The class of an equation from its singular points (DESIGN.md's table:
//! count singular points with infinity; regular ones and irregular ones by
//! Poincaré rank).

use super::{Apparent, Kind, Place, SingularPoint};
use crate::algebra::Rat;

fn rank_text(r: &Rat) -> String {
    r.to_string()
}

/// Returns (class id, one-line reason, notes).
pub fn classify_points(points: &[SingularPoint]) -> (String, String, Vec<String>) {
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
        (2, []) => "euler",
        (3, []) => "hypergeometric",
        (1, [x]) if *x == one => "confluent-hypergeometric",
        (1, [x]) if *x == half => "reduced-confluent-hypergeometric",
        (0, [x]) if *x == r(2) => "parabolic-cylinder",
        (0, [x]) if *x == Rat::new(3.into(), 2.into()).expect("nonzero") => "airy",
        (4, []) => "general-heun",
        (2, [x]) if *x == one => "confluent-heun",
        (0, [x, y]) if *x == one && *y == one => "doubly-confluent-heun",
        (1, [x]) if *x == r(2) => "biconfluent-heun",
        (0, [x]) if *x == r(3) => "triconfluent-heun",
        (2, [x]) if *x == half => "reduced-confluent-heun",
        (0, [x, y]) if *x == half && *y == one => "reduced-doubly-confluent-heun",
        (0, [x, y]) if *x == half && *y == half => "doubly-reduced-doubly-confluent-heun",
        (n, []) if n > 4 => "fuchsian",
        _ => "irregular",
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
    if class == "fuchsian" {
        notes.push(format!("a Fuchsian equation with {regular} regular singular points"));
    }
    (class.to_string(), reason, notes)
}
