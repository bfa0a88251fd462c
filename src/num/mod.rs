//! Pure numerics, no circuits: the complex LU of the nodal equations, small
//! real matrices, e^{M·t} and their eigenvalues, root and peak refinement
//! on a bracket, phase arithmetic and logarithmic grids.

pub mod dense;
pub mod eigen;
pub mod refine;
pub mod solver;
