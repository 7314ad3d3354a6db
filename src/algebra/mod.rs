//! The exact layer: integers, Gaussian rationals, sparse multivariate
//! polynomials and canonical rational functions with factored real
//! denominators. It never sees a floating-point number; everything above it
//! treats it as the single source of truth.

pub mod budget;
mod gcd;
mod int;
mod poly;
pub mod print;
mod ratfunc;
mod rational;
mod upoly;

pub use gcd::{gcd, primitive};
pub use int::Int;
pub use poly::{GInt, Mono, Poly, MAX_VARS};
pub use ratfunc::{Field, Limits, RatFunc};
pub use rational::{parse_complex, GRat, Rat};
pub use upoly::UPoly;
