//! Lists built from an enum's `ALL`: each enumeration is written once.

/// The names of an enum's `ALL` (each variant's `name()`), in a
/// constant: `names_of!(Topology, 3)`.
macro_rules! names_of {
    ($t:ty, $n:expr) => {{
        let mut out = [""; $n];
        let mut i = 0;
        while i < $n {
            out[i] = <$t>::ALL[i].name();
            i += 1;
        }
        out
    }};
}
pub(crate) use names_of;

/// Names as a sentence's list: `a, b or c` (`last` before the last).
pub fn sentence(names: &[&str], last: &str) -> String {
    match names.split_last() {
        None => String::new(),
        Some((only, [])) => only.to_string(),
        Some((end, rest)) => format!("{}{last}{end}", rest.join(", ")),
    }
}
