//! Shared helpers for the integration tests, one module a purpose.

pub mod cli;
pub mod closed_forms;
pub mod keys;
pub mod screen;
pub mod stages;
pub mod tmux;
pub mod warnings;
