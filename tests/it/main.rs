//! The integration tests, one crate (one link of the library): each file
//! beside this one is a module of checks, and `support` holds the shared
//! helpers.

mod support;

mod app_loop;
mod cli_edges;
mod cursor;
mod design_helpers;
mod elements;
mod engine_checks;
mod enum_lists;
mod file_kinds;
mod files_and_ab;
mod gain_errors;
mod limits;
mod loader_fuzz;
mod noise_checks;
mod note_and_shell;
mod pinned;
mod plot_cli;
mod plot_widget;
mod properties;
mod readme;
mod report_cli;
mod saves;
mod scenario_files;
mod screen_fit;
mod spread;
mod spread_ui;
mod stability;
mod standards;
mod step_response;
mod storage;
mod strip_and_ascii;
mod svg_text;
mod sweep_cli;
mod tmux_e2e;
mod ui_render;
mod view_marks;
mod warnings_rules;
mod workbench_keys;
