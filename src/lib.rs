//! canonode: exact normal forms of linear second-order ODEs from pasted text.
#![deny(missing_docs)]

pub mod algebra;
pub mod cli;
pub mod emit;
pub mod error;
pub mod ode;
pub mod syntax;
