//! The screen as text: a ratatui buffer read back row by row.

/// A plain-text snapshot of a buffer, one string per row .
pub fn buffer_text(buf: &ratatui::buffer::Buffer) -> Vec<String> {
    let a = buf.area;
    (a.y..a.y + a.height)
        .map(|y| {
            (a.x..a.x + a.width)
                .map(|x| buf[(x, y)].symbol().to_string())
                .collect::<String>()
        })
        .collect()
}
