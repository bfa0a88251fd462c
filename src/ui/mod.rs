//! The interactive workbench: terminal set-up and the event loop. This is
//! the only module that touches the terminal.

pub mod app;
pub mod keys;
pub mod plot;
pub mod theme;
pub mod view;

use anyhow::{bail, Result};
use app::{App, Stage};
use ratatui::backend::Backend;
use ratatui::crossterm::event::{self, Event};
use ratatui::crossterm::terminal::{BeginSynchronizedUpdate, EndSynchronizedUpdate};
use ratatui::crossterm::QueueableCommand;
use ratatui::Terminal;
use std::io::{IsTerminal, Write};
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

/// Open the workbench on the loaded stages (one or two).
pub fn run(stages: Vec<Stage>, looks: Looks) -> Result<()> {
    if !std::io::stdin().is_terminal() || !std::io::stdout().is_terminal() {
        bail!("the workbench needs a terminal; use `loopwright report FILE` for scripts");
    }
    let mut app = App::new(stages, Theme::new(looks.color, looks.ascii));
    // ratatui's own hook (installed by try_init) leaves raw mode and the
    // alternate screen on a panic, then calls this one: show the cursor too.
    let default_hook = std::panic::take_hook();
    std::panic::set_hook(Box::new(move |info| {
        let _ = ratatui::crossterm::execute!(std::io::stdout(), ratatui::crossterm::cursor::Show);
        default_hook(info);
    }));
    let mut terminal = ratatui::try_init()?;
    let result = (|| -> Result<()> {
        let mut redraw = true;
        while app.running {
            if redraw {
                draw_frame(&mut terminal, &app)?;
            }
            // Block until something happens: no timer, no redraw without an
            // event. Events already queued (a held key over a slow link) are
            // all applied before the next frame, so the screen keeps up.
            redraw = handle(&mut app, event::read()?);
            while app.running && event::poll(std::time::Duration::ZERO)? {
                redraw |= handle(&mut app, event::read()?);
            }
        }
        Ok(())
    })();
    ratatui::try_restore()?;
    ratatui::crossterm::execute!(std::io::stdout(), ratatui::crossterm::cursor::Show)?;
    result
}
