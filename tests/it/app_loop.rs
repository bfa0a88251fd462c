//! The workbench's own event loop, run against ratatui's TestBackend with
//! a scripted event source instead of a terminal.

use crate::support::screen::buffer_text;
use crossterm::event::{Event, KeyCode, KeyEvent, KeyModifiers};
use loopwright::ui::app::App;
use loopwright::ui::theme::Theme;
use loopwright::ui::{run_loop, Events};
use ratatui::backend::TestBackend;
use ratatui::Terminal;
use std::collections::VecDeque;
use std::time::Duration;

/// Each poll takes the next step of the script: an event, or nothing
/// (the loop then waits out its timeout and draws what changed).
struct Script(VecDeque<Option<Event>>);

impl Events for Script {
    fn poll(&mut self, _timeout: Duration) -> anyhow::Result<bool> {
        match self.0.front() {
            Some(Some(_)) => Ok(true),
            Some(None) => {
                self.0.pop_front();
                Ok(false)
            }
            None => panic!("the script ended and the workbench is still running"),
        }
    }
    fn read(&mut self) -> anyhow::Result<Event> {
        Ok(self
            .0
            .pop_front()
            .flatten()
            .expect("poll said an event is ready"))
    }
}

fn press(c: char) -> Option<Event> {
    Some(Event::Key(KeyEvent::new(
        KeyCode::Char(c),
        KeyModifiers::NONE,
    )))
}

#[test]
fn app_loop_on_a_test_backend_shows_the_loop_view_after_v_then_quits() {
    let mut app = App::new(
        vec![(loopwright::files::load::demo(), None)],
        Theme::new(false, false),
    );
    let mut terminal = Terminal::new(TestBackend::new(120, 40)).unwrap();
    // v: the next view; a quiet poll so that the frame is drawn; q: quit
    // (nothing is unsaved).
    let mut script = Script(VecDeque::from([press('v'), None, press('q')]));
    run_loop(&mut terminal, &mut script, &mut app).unwrap();
    assert!(!app.running);
    assert!(script.0.is_empty());
    let screen = buffer_text(terminal.backend().buffer()).join("\n");
    // The demo's loop view: its title, the crossover mark and the status
    // line's note of the view.
    assert!(screen.contains("Loop gain"), "{screen}");
    assert!(!screen.contains("Closed-loop response"), "{screen}");
    assert!(screen.contains("view: Loop gain"), "{screen}");
}
