//! The physical models, one module per topic. Every function is pure, takes SI units (or names
//! its unit in the argument), and cites the source of its formula in its doc comment.

pub mod aquifer;
pub mod demand;
pub mod drives;
pub mod money;
pub mod pipes;
pub mod pumps;
pub mod solar;
pub mod water;
