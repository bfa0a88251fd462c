//! Driving the workbench headlessly: key presses, typed text, and the
//! screen drawn into a TestBackend.

/// A plain key press.
pub fn key(c: crossterm::event::KeyCode) -> crossterm::event::KeyEvent {
    crossterm::event::KeyEvent::new(c, crossterm::event::KeyModifiers::NONE)
}

/// Type text into the workbench, one key per character.
pub fn type_text(a: &mut loopwright::ui::app::App, text: &str) {
    for c in text.chars() {
        a.on_key(key(crossterm::event::KeyCode::Char(c)));
    }
}

/// Press one key n times.
pub fn press(a: &mut loopwright::ui::app::App, c: crossterm::event::KeyCode, n: usize) {
    for _ in 0..n {
        a.on_key(key(c));
    }
}

/// The workbench drawn into a w×h TestBackend, as text.
pub fn screen_at(app: &loopwright::ui::app::App, w: u16, h: u16) -> String {
    let mut t = ratatui::Terminal::new(ratatui::backend::TestBackend::new(w, h)).unwrap();
    t.draw(|f| loopwright::ui::view::draw(f, app)).unwrap();
    crate::support::screen::buffer_text(t.backend().buffer()).join("\n")
}
