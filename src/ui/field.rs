//! A one-line text field: value entry, the title and the prompts.
//!
//! A field opened on an existing value starts with that value *offered*:
//! typing a character (or Backspace) replaces it whole, a cursor key starts
//! editing it. The keys are [`keys::FIELD_KEYS`](super::keys::FIELD_KEYS).

use super::keys::FieldAction;

#[derive(Debug, Clone, PartialEq, Eq, Default)]
pub struct Field {
    chars: Vec<char>,
    /// The cursor, a character index (0 ..= len).
    cursor: usize,
    /// The pre-filled text is offered: the next character replaces it.
    offered: bool,
}

impl Field {
    /// A field offering `text` (cursor at its end).
    pub fn offering(text: &str) -> Field {
        let chars: Vec<char> = text.chars().collect();
        Field {
            cursor: chars.len(),
            offered: !chars.is_empty(),
            chars,
        }
    }

    pub fn text(&self) -> String {
        self.chars.iter().collect()
    }

    pub fn is_empty(&self) -> bool {
        self.chars.is_empty()
    }

    /// Whether the pre-filled text is still offered whole.
    pub fn offered(&self) -> bool {
        self.offered
    }

    /// The text before the cursor, the character under it (None at the
    /// end) and the text after it.
    pub fn parts(&self) -> (String, Option<char>, String) {
        let before = self.chars[..self.cursor].iter().collect();
        let at = self.chars.get(self.cursor).copied();
        let after = self
            .chars
            .get(self.cursor + 1..)
            .map_or(String::new(), |r| r.iter().collect());
        (before, at, after)
    }

    /// Type one character at the cursor (replacing an offered text).
    pub fn insert(&mut self, c: char) {
        if self.offered {
            self.clear();
        }
        self.chars.insert(self.cursor, c);
        self.cursor += 1;
    }

    fn clear(&mut self) {
        self.chars.clear();
        self.cursor = 0;
        self.offered = false;
    }

    /// Apply an editing key (Apply and Cancel are the caller's).
    pub fn edit(&mut self, action: FieldAction) {
        let len = self.chars.len();
        let offered = std::mem::replace(&mut self.offered, false);
        match action {
            FieldAction::Left => self.cursor = self.cursor.saturating_sub(1),
            FieldAction::Right => self.cursor = (self.cursor + 1).min(len),
            FieldAction::Home => self.cursor = 0,
            FieldAction::End => self.cursor = len,
            FieldAction::Backspace if offered => self.clear(),
            FieldAction::Backspace if self.cursor > 0 => {
                self.cursor -= 1;
                self.chars.remove(self.cursor);
            }
            FieldAction::Delete if self.cursor < len => {
                self.chars.remove(self.cursor);
            }
            FieldAction::Clear => self.clear(),
            FieldAction::DeleteWord => self.delete_word(),
            _ => {}
        }
    }

    /// Delete back from the cursor over spaces, then over one word.
    fn delete_word(&mut self) {
        let mut start = self.cursor;
        while start > 0 && self.chars[start - 1].is_whitespace() {
            start -= 1;
        }
        let word = |c: char| c.is_alphanumeric() || c == '.' || c == '_';
        let in_word = start > 0 && word(self.chars[start - 1]);
        while start > 0 && !self.chars[start - 1].is_whitespace() {
            if in_word && !word(self.chars[start - 1]) {
                break;
            }
            start -= 1;
            if !in_word {
                break;
            }
        }
        self.chars.drain(start..self.cursor);
        self.cursor = start;
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn typing_replaces_an_offered_value_and_cursor_keys_edit_it() {
        let mut f = Field::offering("4k7");
        f.insert('1');
        assert_eq!(f.text(), "1");
        let mut f = Field::offering("4k7");
        f.edit(FieldAction::Home);
        f.insert('1');
        assert_eq!(f.text(), "14k7");
        f.edit(FieldAction::End);
        f.edit(FieldAction::Left);
        f.edit(FieldAction::Backspace);
        assert_eq!(f.text(), "147");
        f.edit(FieldAction::Clear);
        assert!(f.is_empty());
    }

    #[test]
    fn word_delete_stops_at_a_separator() {
        let mut f = Field::offering("scenarios/old.ron");
        f.edit(FieldAction::End);
        f.edit(FieldAction::DeleteWord);
        assert_eq!(f.text(), "scenarios/");
        f.edit(FieldAction::DeleteWord);
        assert_eq!(f.text(), "scenarios");
        f.edit(FieldAction::DeleteWord);
        assert_eq!(f.text(), "");
    }
}
