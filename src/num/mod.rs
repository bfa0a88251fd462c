//! Pure numerics, no circuits: the complex LU of the nodal equations, small
//! real matrices and e^{M·t}, root and peak refinement on a bracket, phase
//! arithmetic and logarithmic grids.

pub mod dense;
pub mod refine;
pub mod solver;
