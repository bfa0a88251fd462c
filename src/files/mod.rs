//! Files: reading a stage file safely (regular files only, size cap, UTF-8
//! positions; RON with field, line and column in every error) and saving it
//! (in-place patch of what changed, atomic write, rescue paths).

pub mod figures;
pub mod filetext;
pub mod load;
pub mod parts;
pub mod storage;
