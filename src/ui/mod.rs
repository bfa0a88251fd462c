//! The interactive workbench: terminal set-up, the event loop, signals and
//! rescue files. This is the only module that touches the terminal.

pub mod app;
pub mod field;
pub mod keys;
pub mod plot;
pub mod theme;
pub mod view;

use crate::storage;
use anyhow::{bail, Result};
use app::{App, Stage};
use ratatui::backend::Backend;
use ratatui::crossterm::event::{self, Event};
use ratatui::crossterm::terminal::{BeginSynchronizedUpdate, EndSynchronizedUpdate};
use ratatui::crossterm::QueueableCommand;
use ratatui::Terminal;
use signal_hook::consts::{SIGHUP, SIGTERM};
use std::io::{IsTerminal, Write};
use std::panic::AssertUnwindSafe;
use std::sync::atomic::{AtomicUsize, Ordering};
use std::sync::{Arc, Mutex};
use std::time::Duration;
use theme::Theme;

/// How the workbench looks.
#[derive(Debug, Clone, Copy)]
pub struct Looks {
    pub color: bool,
    pub ascii: bool,
}

impl Looks {
    /// Colour unless `--no-color` or NO_COLOR; ASCII when asked or when the
    /// locale is not UTF-8.
    pub fn resolve(no_color: bool, ascii: bool) -> Looks {
        let env_no_color = std::env::var_os("NO_COLOR").is_some_and(|v| !v.is_empty());
        Looks {
            color: !(no_color || env_no_color),
            ascii: ascii || !theme::locale_is_utf8(),
        }
    }
}

/// Draw one frame as a single synchronized update.
pub fn draw_frame<B: Backend + Write>(terminal: &mut Terminal<B>, app: &App) -> Result<()>
where
    B::Error: Send + Sync + 'static,
{
    terminal.backend_mut().queue(BeginSynchronizedUpdate)?;
    terminal.draw(|f| view::draw(f, app))?;
    terminal.backend_mut().queue(EndSynchronizedUpdate)?;
    Write::flush(terminal.backend_mut())?;
    Ok(())
}

/// Apply one terminal event; true when the screen must be redrawn.
fn handle(app: &mut App, ev: Event) -> bool {
    match ev {
        // Debug builds only: a deliberate panic, so the tests can check that
        // the terminal is restored on that path too.
        #[cfg(debug_assertions)]
        Event::Key(k)
            if k.code == event::KeyCode::Char('!')
                && std::env::var_os("LOOPWRIGHT_TEST_PANIC").is_some() =>
        {
            panic!("deliberate test panic");
        }
        Event::Key(k) => {
            app.on_key(k);
            true
        }
        Event::Resize(..) => true,
        _ => false,
    }
}

/// The panic message, kept by our hook so that it is printed after the
/// rescue files are written and the terminal is restored.
static PANIC_MESSAGE: Mutex<Option<String>> = Mutex::new(None);

/// Write every unsaved stage to its rescue file; one line per stage saying
/// where (or why not).
fn write_rescues(app: &App) -> Vec<String> {
    let mut lines = Vec::new();
    for (i, slot) in app.slots.iter().enumerate().filter(|(_, s)| s.dirty) {
        let label = App::slot_label(i);
        let text = storage::render(
            &slot.scenario,
            slot.original.as_ref().map(|o| o.text.as_str()),
        )
        .text;
        // Next to its file; where that fails, in the current folder.
        let mut tries = vec![storage::rescue_path(slot.path.as_deref(), label)];
        if slot.path.is_some() {
            tries.push(storage::rescue_path(None, label));
        }
        let mut last_err = None;
        let written = tries
            .into_iter()
            .find(|p| match storage::write_atomic(p, &text) {
                Ok(_) => true,
                Err(e) => {
                    last_err = Some(e);
                    false
                }
            });
        lines.push(match (written, last_err) {
            (Some(p), _) => format!("unsaved stage {label} written to {}", p.display()),
            (None, e) => format!(
                "unsaved stage {label} could not be written: {}",
                e.map(|e| e.to_string()).unwrap_or_default()
            ),
        });
    }
    lines
}

/// Leave raw mode and the alternate screen, show the cursor. Errors are
/// ignored: after a hang-up there may be no terminal left to tell.
fn restore() {
    let _ = ratatui::try_restore();
    let _ = ratatui::crossterm::execute!(std::io::stdout(), ratatui::crossterm::cursor::Show);
}

/// Draw on events, wait for them at most 200 ms at a time so that a
/// termination signal is noticed. Returns the signal that ended it, if any.
fn event_loop(
    terminal: &mut ratatui::DefaultTerminal,
    app: &mut App,
    signal: &AtomicUsize,
) -> Result<Option<i32>> {
    let caught = || match signal.load(Ordering::SeqCst) {
        0 => None,
        s => Some(s as i32),
    };
    let mut redraw = true;
    while app.running {
        if let Some(sig) = caught() {
            return Ok(Some(sig));
        }
        let step = (|| -> Result<()> {
            if redraw {
                draw_frame(terminal, app)?;
                redraw = false;
            }
            // No timer redraws: a frame only follows an event. Events
            // already queued (a held key over a slow link) are all applied
            // before the next frame, so the screen keeps up.
            if event::poll(Duration::from_millis(200))? {
                redraw = handle(app, event::read()?);
                while app.running && event::poll(Duration::ZERO)? {
                    redraw |= handle(app, event::read()?);
                }
            }
            Ok(())
        })();
        if let Err(e) = step {
            // A hang-up also breaks terminal reads: the signal is the cause.
            return caught().map(Some).ok_or(e);
        }
    }
    Ok(None)
}

/// Open the workbench on the loaded stages (one or two).
///
/// SIGTERM and SIGHUP, a panic or a terminal error restore the terminal
/// and first write each unsaved stage to a rescue file (see
/// [`storage::rescue_path`]), saying where on stderr. After a signal the
/// process exits with 128 + the signal number, after a panic with 101.
pub fn run(stages: Vec<Stage>, looks: Looks) -> Result<()> {
    if !std::io::stdin().is_terminal() || !std::io::stdout().is_terminal() {
        bail!("the workbench needs a terminal; use `loopwright report FILE` for scripts");
    }
    let mut app = App::new(stages, Theme::new(looks.color, looks.ascii));
    let signal = Arc::new(AtomicUsize::new(0));
    for sig in [SIGTERM, SIGHUP] {
        signal_hook::flag::register_usize(sig, Arc::clone(&signal), sig as usize)?;
    }
    let mut terminal = ratatui::try_init()?;
    // Instead of ratatui's hook (which restores at once), keep the message:
    // the rescue files are written first, then the terminal is restored.
    let _ = std::panic::take_hook();
    std::panic::set_hook(Box::new(|info| {
        if let Ok(mut m) = PANIC_MESSAGE.lock() {
            *m = Some(info.to_string());
        }
    }));
    let result = std::panic::catch_unwind(AssertUnwindSafe(|| {
        event_loop(&mut terminal, &mut app, &signal)
    }));
    // Back to the default hook.
    let _ = std::panic::take_hook();
    let (code, what) = match result {
        Ok(Ok(None)) => {
            restore();
            return Ok(());
        }
        Ok(Ok(Some(sig))) => {
            let name = if sig == SIGHUP { "SIGHUP" } else { "SIGTERM" };
            (128 + sig, format!("stopped by {name}"))
        }
        Ok(Err(e)) => {
            let rescued = write_rescues(&app);
            restore();
            for line in rescued {
                eprintln!("loopwright: {line}");
            }
            return Err(e);
        }
        Err(_) => {
            let msg = PANIC_MESSAGE.lock().ok().and_then(|mut m| m.take());
            (101, msg.unwrap_or_else(|| "panicked".into()))
        }
    };
    let rescued = write_rescues(&app);
    restore();
    eprintln!("loopwright: {what}");
    for line in rescued {
        eprintln!("loopwright: {line}");
    }
    std::process::exit(code);
}
