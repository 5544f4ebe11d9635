//! Dense linear algebra that mortise does itself rather than through
//! nalgebra, where nalgebra's result was found wrong: the complex singular
//! value decomposition ([`svd`]).

pub mod svd;
