//! The interactive workbench: terminal set-up, the event loop, signals and
//! rescue files. This is the only module that touches the terminal.

pub mod app;
pub mod field;
pub mod keys;
pub mod part_list_view;
pub mod plot;
pub mod readout;
pub mod sheet_view;
pub mod spread_job;
pub mod spread_view;
pub mod theme;
pub mod tighten_job;
pub mod view;
pub mod widgets;

use crate::files::storage;
use anyhow::{bail, Result};
use app::{App, Opened};
use ratatui::backend::Backend;
use ratatui::crossterm::event::{self, Event};
use ratatui::crossterm::terminal::{BeginSynchronizedUpdate, EndSynchronizedUpdate};
use ratatui::crossterm::QueueableCommand;
use ratatui::Terminal;
use signal_hook::consts::{SIGHUP, SIGINT, SIGQUIT, SIGTERM};
use std::io::{IsTerminal, Write};
use std::panic::AssertUnwindSafe;
use std::process::ExitCode;
use std::sync::atomic::{AtomicBool, AtomicUsize, Ordering};
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

/// Draw one frame, plainly: for a backend that is not a terminal (the
/// tests' TestBackend).
pub fn draw_plain<B: Backend>(terminal: &mut Terminal<B>, app: &App) -> Result<()>
where
    B::Error: Send + Sync + 'static,
{
    terminal.draw(|f| view::draw(f, app))?;
    Ok(())
}

/// Where the workbench's events come from: the terminal, or a script.
pub trait Events {
    /// Whether an event is ready, waiting at most `timeout` for one.
    fn poll(&mut self, timeout: Duration) -> Result<bool>;
    /// The next event (after `poll` said there is one).
    fn read(&mut self) -> Result<Event>;
}

/// The terminal's events.
pub struct TerminalEvents;

impl Events for TerminalEvents {
    fn poll(&mut self, timeout: Duration) -> Result<bool> {
        Ok(event::poll(timeout)?)
    }
    fn read(&mut self) -> Result<Event> {
        Ok(event::read()?)
    }
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

/// One unsaved stage ready to be rescued: its label, where to write it (in
/// order of preference) and the text.
#[derive(Debug, Clone)]
struct Rescue {
    label: &'static str,
    paths: Vec<std::path::PathBuf>,
    text: String,
}

/// The rescue files the unsaved stages would need now.
fn rescues(app: &App) -> Vec<Rescue> {
    let mut out = Vec::new();
    for (i, slot) in app.slots.iter().enumerate().filter(|(_, s)| s.dirty) {
        let label = App::slot_label(i);
        let text = storage::render(
            &slot.scenario,
            slot.original.as_ref().map(|o| o.text.as_str()),
        )
        .text;
        // Next to its file; where that fails, in the current folder.
        let mut paths = vec![storage::rescue_path(slot.path.as_deref(), label)];
        if slot.path.is_some() {
            paths.push(storage::rescue_path(None, label));
        }
        out.push(Rescue { label, paths, text });
    }
    out
}

/// Write the rescue files; one line per stage saying where (or why not).
fn write_rescue_files(items: &[Rescue]) -> Vec<String> {
    let mut lines = Vec::new();
    for r in items {
        let mut last_err = None;
        let written = r
            .paths
            .iter()
            // A new copy never replaces an older one: the first free
            // numbered name.
            .map(|p| storage::free_rescue_path(p))
            .find(|p| match storage::write_atomic(p, &r.text) {
                Ok(_) => true,
                Err(e) => {
                    last_err = Some(e);
                    false
                }
            });
        lines.push(match (written, last_err) {
            (Some(p), _) => format!("unsaved stage {} written to {}", r.label, p.display()),
            (None, e) => format!(
                "unsaved stage {} could not be written: {}",
                r.label,
                e.map(|e| e.to_string()).unwrap_or_default()
            ),
        });
    }
    lines
}

/// Write every unsaved stage to its rescue file; one line per stage saying
/// where (or why not).
fn write_rescues(app: &App) -> Vec<String> {
    write_rescue_files(&rescues(app))
}

/// What the signal watchdog needs: the signal flag, the rescue files as of
/// the last handled key, and who has claimed the shutdown.
struct Shared {
    signal: Arc<AtomicUsize>,
    pending: Mutex<Vec<Rescue>>,
    claimed: AtomicBool,
}

impl Shared {
    /// True for the first caller only: that one writes the rescue files,
    /// restores the terminal and exits.
    fn claim(&self) -> bool {
        !self.claimed.swap(true, Ordering::SeqCst)
    }
}

/// After a stop signal the event loop normally ends within 200 ms.
/// When it cannot (a vanished terminal can keep the terminal library
/// reading end-of-file for ever), this thread does the shutdown itself
/// after a second: the rescue files as of the last key, restore, exit.
fn spawn_watchdog(shared: Arc<Shared>) {
    std::thread::spawn(move || loop {
        std::thread::sleep(Duration::from_millis(100));
        let sig = shared.signal.load(Ordering::SeqCst);
        if sig == 0 {
            continue;
        }
        std::thread::sleep(Duration::from_secs(1));
        if !shared.claim() {
            return;
        }
        let items = shared.pending.lock().map(|p| p.clone()).unwrap_or_default();
        let lines = write_rescue_files(&items);
        restore();
        say(&format!("stopped by {}", signal_name(sig as i32)));
        for line in lines {
            say(&line);
        }
        std::process::exit(128 + sig as i32);
    });
}

/// The signals that stop the workbench with a restored terminal and
/// rescue files. In raw mode Ctrl-C is a key, so SIGINT and SIGQUIT come
/// only from another process (`kill`).
const STOP_SIGNALS: [i32; 4] = [SIGTERM, SIGHUP, SIGINT, SIGQUIT];

/// The name of one of [`STOP_SIGNALS`], for the message on stderr.
fn signal_name(sig: i32) -> &'static str {
    match sig {
        SIGHUP => "SIGHUP",
        SIGINT => "SIGINT",
        SIGQUIT => "SIGQUIT",
        _ => "SIGTERM",
    }
}

/// One line on stderr; after a hang-up there may be no terminal to write
/// to, and that must not stop the shutdown (`eprintln!` would panic).
fn say(line: &str) {
    let _ = writeln!(std::io::stderr(), "loopwright: {line}");
}

/// Leave raw mode and the alternate screen, show the cursor. Errors are
/// ignored: after a hang-up there may be no terminal left to tell.
fn restore() {
    let _ = ratatui::try_restore();
    let _ = ratatui::crossterm::execute!(std::io::stdout(), ratatui::crossterm::cursor::Show);
}

/// How the loop draws a frame on its backend.
type DrawFrame<B> = fn(&mut Terminal<B>, &App) -> Result<()>;

/// Draw on events, wait for them at most 200 ms at a time so that a
/// termination signal is noticed. Returns the signal that ended it, if any.
fn event_loop<B: Backend>(
    terminal: &mut Terminal<B>,
    draw: DrawFrame<B>,
    events: &mut impl Events,
    app: &mut App,
    shared: &Shared,
) -> Result<Option<i32>> {
    let caught = || match shared.signal.load(Ordering::SeqCst) {
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
                draw(terminal, app)?;
                redraw = false;
            }
            // A frame follows an event, or the spread job's progress.
            // Events already queued (a held key over a slow link) are all
            // applied before the next frame, so the screen keeps up.
            let wait = if app.spread.running() || app.tightening.running() {
                100
            } else {
                200
            };
            if events.poll(Duration::from_millis(wait))? {
                redraw = handle(app, events.read()?);
                while app.running && events.poll(Duration::ZERO)? {
                    redraw |= handle(app, events.read()?);
                }
                // What the watchdog would rescue, as of this key.
                if let Ok(mut p) = shared.pending.lock() {
                    *p = rescues(app);
                }
            }
            redraw |= app.tick();
            Ok(())
        })();
        if let Err(e) = step {
            // A hang-up also breaks terminal reads: the signal is the cause.
            return caught().map(Some).ok_or(e);
        }
    }
    Ok(None)
}

/// The workbench's loop on any backend, with events from `events` and no
/// signal handling: until the app quits (the tests drive it through a
/// TestBackend with a scripted event source).
pub fn run_loop<B: Backend>(
    terminal: &mut Terminal<B>,
    events: &mut impl Events,
    app: &mut App,
) -> Result<()>
where
    B::Error: Send + Sync + 'static,
{
    let shared = Shared {
        signal: Arc::new(AtomicUsize::new(0)),
        pending: Mutex::new(Vec::new()),
        claimed: AtomicBool::new(false),
    };
    event_loop(terminal, draw_plain, events, app, &shared)?;
    Ok(())
}

/// Open the workbench on the loaded stages (one or two).
///
/// SIGTERM, SIGHUP, SIGINT and SIGQUIT, a panic or a terminal error
/// restore the terminal and first write each unsaved stage to a rescue
/// file (see [`storage::rescue_path`]), saying where on stderr. After a signal the
/// process exits with 128 + the signal number, after a panic with 101.
pub fn run(stages: Vec<Opened>, looks: Looks) -> Result<ExitCode> {
    if !std::io::stdin().is_terminal() || !std::io::stdout().is_terminal() {
        bail!("the workbench needs a terminal; use `loopwright report FILE` for scripts");
    }
    let mut app = App::new(stages, Theme::new(looks.color, looks.ascii));
    app.offer_rescues();
    app.user_parts = crate::files::parts::user_dir();
    let signal = Arc::new(AtomicUsize::new(0));
    for sig in STOP_SIGNALS {
        signal_hook::flag::register_usize(sig, Arc::clone(&signal), sig as usize)?;
    }
    let shared = Arc::new(Shared {
        signal,
        pending: Mutex::new(rescues(&app)),
        claimed: AtomicBool::new(false),
    });
    spawn_watchdog(Arc::clone(&shared));
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
        event_loop(
            &mut terminal,
            draw_frame,
            &mut TerminalEvents,
            &mut app,
            &shared,
        )
    }));
    if !shared.claim() {
        // The watchdog is already writing the rescue files and exits.
        loop {
            std::thread::park();
        }
    }
    // Back to the default hook.
    let _ = std::panic::take_hook();
    let (code, what) = match result {
        Ok(Ok(None)) => {
            restore();
            return Ok(ExitCode::SUCCESS);
        }
        Ok(Ok(Some(sig))) => (128 + sig, format!("stopped by {}", signal_name(sig))),
        Ok(Err(e)) => {
            let rescued = write_rescues(&app);
            restore();
            for line in rescued {
                say(&line);
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
    say(&what);
    for line in rescued {
        say(&line);
    }
    Ok(ExitCode::from(code as u8))
}
