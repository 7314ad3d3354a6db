//! The text a user writes for points, ends and exponent choices, read once
//! into the library's typed values ([`PointId`], [`Choices`], [`SeriesMap`],
//! [`GivenEnds`]): the expansion point of a series (`recurrence --about`),
//! exponent choices (`--exponents POINT=CHOICE,…`), a series variable
//! (`--series u=EXPR`) and the ends of a boundary problem (`--ends`). The
//! Python binding and `check`'s re-derivation of records read the same
//! texts through these functions (re-exported by `canonode::command`), and
//! a link between coupled equations (`--link NAME = EXPR`) is read here too.
//!
//! A point is written as `classify` prints it: an expression in the
//! equation's variable and parameters (`2*M`, `0`; compared exactly, so
//! `M*2` names the same point), `inf`, `infinity` or `∞` for infinity, and
//! `θ` or `theta` for the roots of an irreducible factor of degree ≥ 2.
//! Errors carry spans into the text read and no origin: the caller says
//! which input the text was.

use crate::algebra::Field;
use crate::analysis::canonical::Choices;
use crate::analysis::{Analysis, Kind, Place, PointId};
use crate::emit::record::{AskedRecurrence, RecurrenceRequest};
use crate::error::{Error, ErrorKind, RequestInput, Result};
use crate::ode::Reduction;
use crate::series::SeriesMap;
use crate::solve::boundary::{Condition, GivenEnds, Location, Weight};
use crate::syntax::Span;

fn usage(msg: impl Into<String>) -> Error {
    Error::new(ErrorKind::Usage, msg)
}

/// The points of `an` as `classify` prints them, for messages.
fn listed(red: &Reduction, an: &Analysis) -> String {
    an.points.iter().map(|p| crate::analysis::labels::point_name(&red.field, p)).collect::<Vec<_>>().join(", ")
}

/// Reads one point (see the module documentation) against the analysis `an`
/// of `red`. `offset` is where `text` starts in the option's text (spans).
fn point_at(red: &Reduction, an: &Analysis, text: &str, offset: usize) -> Result<PointId> {
    let trimmed = text.trim();
    let lead = text.len() - text.trim_start().len();
    let span = Span::new(offset + lead, offset + lead + trimmed.len());
    let id = match trimmed {
        "" => return Err(usage("a point is missing here").at(Span::new(offset, offset + text.len()))),
        "inf" | "infinity" | "∞" => PointId::Infinity,
        t if {
            let letter = crate::algebra::print::root_letter(red.field.names());
            t == letter.text || t == letter.ascii
        } =>
        {
            let roots: Vec<&crate::analysis::SingularPoint> = an.points.iter().filter(|p| matches!(p.place, Place::Roots(_))).collect();
            // The roots of a quadratic at a regular point (a horizon r₊) first,
            // as the series about θ takes them.
            let first = roots
                .iter()
                .find(|p| p.kind == Kind::Regular && matches!(&p.place, Place::Roots(f) if f.to_univariate(0).len() == 3))
                .or_else(|| roots.first());
            match first {
                Some(p) => p.place.id(),
                None => {
                    return Err(
                        usage(format!("no regular singular point is a root of an irreducible factor; the points are: {}", listed(red, an))).at(span)
                    )
                }
            }
        }
        _ => {
            let at = crate::ode::read_expression(red, trimmed).map_err(|e| e.moved_by(offset + lead).or_at(span))?;
            PointId::At(at)
        }
    };
    if an.index_of(&id).is_none() {
        return Err(usage(format!("'{trimmed}' is not a singular point of the equation; the points are: {}", listed(red, an))).at(span));
    }
    Ok(id)
}

/// Reads the expansion point of a series (`--about`).
pub fn read_point(red: &Reduction, an: &Analysis, text: &str) -> Result<PointId> {
    point_at(red, an, text, 0)
}

/// Reads exponent choices `POINT=CHOICE,…` (e.g. `2*M=2,inf=1`): a point
/// and the 1-based exponent (or branch) to keep there.
pub fn read_choices(red: &Reduction, an: &Analysis, text: &str) -> Result<Choices> {
    let mut c = Choices::default();
    let mut start = 0;
    for piece in text.split(',') {
        let span = Span::new(start, start + piece.len());
        let here = start;
        start += piece.len() + 1;
        if piece.trim().is_empty() {
            continue;
        }
        let Some((pt, ch)) = piece.rsplit_once('=') else {
            return Err(usage("expected POINT=CHOICE, e.g. 0=2 or inf=1").at(span));
        };
        let Ok(n) = ch.trim().parse::<usize>() else {
            return Err(usage(format!("'{}' is not a choice: write 1 or 2", ch.trim())).at(span));
        };
        if n != 1 && n != 2 {
            return Err(usage(format!("choice {n} does not exist: each point has exponents 1 and 2")).at(span));
        }
        let id = point_at(red, an, pt, here)?;
        if c.get(&id).is_some() {
            return Err(usage(format!("'{}' is chosen twice", pt.trim())).at(span));
        }
        c.set(id, n);
    }
    Ok(c)
}

/// Reads a series variable `u=EXPR`: EXPR a function of the equation's
/// variable (the series checks that it is a Möbius map vanishing at the
/// expansion point).
pub fn read_series(red: &Reduction, text: &str) -> Result<SeriesMap> {
    let Some(eq) = text.find('=') else { return Err(usage("expected u=EXPR, e.g. u=(r - 2*M)/r").at(Span::new(0, text.len()))) };
    let offset = eq + 1;
    let map = crate::ode::read_expression(red, &text[offset..]).map_err(|e| e.moved_by(offset))?;
    Ok(SeriesMap::Given { map, text: text.to_string() })
}

/// Reads the texts of a recurrence asked of a record (`record --about`,
/// or the `option.*` lines of a record being checked) against the equation
/// `red` (analysed as `an`); `None` when no point was asked for.
pub fn asked_recurrence(red: &Reduction, an: &Analysis, texts: &RecurrenceRequest) -> Result<Option<AskedRecurrence>> {
    match &texts.about {
        Some(about) => asked_about(red, an, about, texts.series.as_deref(), texts.exponents.as_deref()).map(Some),
        None => Ok(None),
    }
}

/// Reads a recurrence asked for about `about` (`--about`), in the series
/// variable `series` (`--series`) with the choices `exponents`
/// (`--exponents`). Errors name the input they are in.
pub fn asked_about(red: &Reduction, an: &Analysis, about: &str, series: Option<&str>, exponents: Option<&str>) -> Result<AskedRecurrence> {
    let point = read_point(red, an, about).map_err(|e| e.in_option(RequestInput::About))?;
    let map = match series {
        Some(t) => read_series(red, t).map_err(|e| e.in_option(RequestInput::Series))?,
        None => SeriesMap::Default,
    };
    let choices = match exponents {
        Some(t) => read_choices(red, an, t).map_err(|e| e.in_option(RequestInput::Exponents))?,
        None => Choices::default(),
    };
    let texts = RecurrenceRequest { about: Some(about.to_string()), series: series.map(str::to_string), exponents: exponents.map(str::to_string) };
    Ok(AskedRecurrence { texts, about: point, series: map, choices })
}

/// The derivation record of `source` (named `source_path`, reduced with
/// `opts`) holding the recurrence the texts ask for (the rule's when they
/// name no point) and, with `spectral`, the closed-form spectrum: what
/// `record` writes and `check` recomputes.
pub fn derive_record(
    source: &str,
    source_path: &str,
    opts: &crate::ode::ReduceOptions,
    texts: &RecurrenceRequest,
    spectral: Option<&crate::emit::record::SpectralSetup>,
) -> Result<crate::emit::record::Record> {
    let d = crate::emit::record::Derivation::start(source, source_path, opts)?;
    let asked = asked_recurrence(d.reduction(), d.analysis(), texts)?;
    d.finish(asked.as_ref(), spectral)
}

/// Reads the two ends of a boundary problem written `LEFT[:COND]..RIGHT[:COND]`,
/// each end a real number (a singular point, matched numerically) or `inf`,
/// each condition a condition's name (`Condition::name`, a mixed one with its
/// weight as `mixed=K`); errors span the whole text (the
/// caller says which option or argument it was).
pub fn read_ends(text: &str) -> Result<GivenEnds> {
    let bad = |msg: String| Error::new(ErrorKind::Usage, msg).at(crate::syntax::Span::new(0, text.len()));
    let Some((l, r)) = text.split_once("..") else {
        return Err(bad("expected LEFT..RIGHT, e.g. '2..inf:outgoing'".into()));
    };
    let one = |part: &str| -> Result<(Location, Option<Condition>)> {
        let (place, cond) = match part.split_once(':') {
            Some((p, c)) => (p.trim(), Some(c.trim())),
            None => (part.trim(), None),
        };
        let location = match place {
            "inf" | "infinity" | "∞" => Location::Infinity,
            _ => {
                let v = crate::algebra::parse_complex(place).ok_or_else(|| bad(format!("'{place}' is not a number or 'inf'")))?;
                let (re, im) = v.to_f64();
                if im != 0.0 || !re.is_finite() {
                    return Err(bad(format!("'{place}' is not a finite real number")));
                }
                Location::At(re)
            }
        };
        let condition = match cond {
            Some(c) => match c.split_once('=') {
                Some((name, weight)) if name.trim() == Condition::Mixed(Weight(0.0)).name() => {
                    let w = crate::algebra::parse_complex(weight.trim())
                        .map(|v| v.to_f64())
                        .filter(|(re, im)| *im == 0.0 && re.is_finite())
                        .ok_or_else(|| bad(format!("the weight of '{c}' is not a finite real number (e.g. mixed=0.5)")))?;
                    Some(Condition::Mixed(Weight(w.0)))
                }
                _ => Some(
                    Condition::from_name(c)
                        .ok_or_else(|| bad(format!("'{c}' is not a condition (into, out-of, outgoing, decaying, normalisable, slower, mixed=K)")))?,
                ),
            },
            None => None,
        };
        Ok((location, condition))
    };
    Ok([one(l)?, one(r)?])
}

/// Reads a link `NAME = EXPR` (`--link`) over the joint names of a radial
/// and an angular equation; spans are byte offsets into `text`.
pub fn read_link(text: &str, joint: &Field, radial: &Field, angular: &Field) -> Result<crate::solve::coupled::Link> {
    let Some(eq) = text.find('=') else {
        return Err(usage("expected a link NAME = EXPR, e.g. 'lam = A + c^2 - 2*a*m*omega'").at(crate::syntax::Span::new(0, text.len())));
    };
    let target = text[..eq].trim().to_string();
    let tspan = crate::syntax::Span::new(0, eq);
    let in_radial = radial.names()[1..].contains(&target);
    let in_angular = angular.names()[1..].contains(&target);
    let angular_side = match (in_radial, in_angular) {
        (true, false) => false,
        (false, true) => true,
        (true, true) => {
            return Err(usage(format!("'{target}' is a parameter of both equations: a link sets a parameter of one of them")).at(tspan));
        }
        (false, false) => return Err(usage(format!("'{target}' is a parameter of neither equation")).at(tspan)),
    };
    let body = &text[eq + 1..];
    let limits = crate::syntax::ParseLimits::default();
    let shift = |e: Error| e.moved_by(eq + 1);
    let expr = crate::syntax::parse_expr(body, &limits).map_err(shift)?;
    let expr = crate::ode::lower_rational(joint, joint.names(), &[], &expr).map_err(shift)?;
    if expr.uses_var(0) {
        return Err(usage(format!("a link may not depend on the variable {}", joint.names()[0])).at(crate::syntax::Span::new(eq + 1, text.len())));
    }
    let slot = joint.names().iter().position(|n| *n == target).expect("a parameter of either equation is a joint name");
    Ok(crate::solve::coupled::Link { target, expr, angular: angular_side, slot })
}
