//! `spectrum --region`: every mode in a rectangle of the complex plane,
//! found with no seed by the global spectral method, each polished by the
//! continued fraction (where the recurrence allows it) or by direct
//! integration, and checked by the other.

use super::Failure;
use crate::emit::DocFormat;
use crate::error::{Error, ErrorKind};
use crate::solve::global::Region;
use crate::solve::plot::PlaneMode;

fn bad(msg: String) -> Failure {
    Error::new(ErrorKind::Usage, msg).in_named("--region").into()
}

/// Reads 'RE0..RE1,IM0..IM1'.
pub(crate) fn parse_region(text: &str) -> Result<Region, Failure> {
    let Some((re, im)) = text.split_once(',') else {
        return Err(bad(format!("expected RE0..RE1,IM0..IM1 (e.g. '0..1,-2..0'), not '{text}'")));
    };
    let range = |part: &str, what: &str| -> Result<(f64, f64), Failure> {
        let Some((lo, hi)) = part.split_once("..") else {
            return Err(bad(format!("the {what} range '{part}' is not LOW..HIGH")));
        };
        let num = |s: &str| -> Result<f64, Failure> {
            s.trim().parse::<f64>().ok().filter(|x| x.is_finite()).ok_or_else(|| bad(format!("'{}' is not a finite number", s.trim())))
        };
        let (lo, hi) = (num(lo)?, num(hi)?);
        if lo >= hi {
            return Err(bad(format!("the {what} range '{part}' is empty (LOW must lie below HIGH)")));
        }
        Ok((lo, hi))
    };
    Ok(Region { re: range(re, "real")?, im: range(im, "imaginary")? })
}

/// Every mode in the region `text`, rendered in `format`, with the modes for
/// a picture and the frequency's name.
pub(crate) fn region_modes(
    text: &str,
    grid: usize,
    format: DocFormat,
    src_name: &str,
    red: &crate::ode::Reduction,
    req: &crate::solve::request::SpectrumRequest,
) -> Result<(String, Vec<PlaneMode>, String), Failure> {
    let region = parse_region(text)?;
    let report = crate::solve::region::region_modes(red, req, region, grid)?;
    let out = match format {
        DocFormat::Json => format!("{}\n", serde_json::to_string_pretty(&crate::emit::region::json(&report)).unwrap_or_default()),
        DocFormat::Csv => crate::emit::region::csv(&report),
        DocFormat::Text => crate::emit::region::text(&report, src_name),
    };
    Ok((out, report.plane_modes(), report.frequency))
}
