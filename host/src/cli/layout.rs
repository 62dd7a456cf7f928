//! The frame every readable table shares: the optional title line, the wording of the activity
//! model, the files written and the closing caution.

use std::fmt::Write;

use phdose::chem::Activity;

/// A new table, opened with `title` (used by `--example`) on its own line when given.
pub fn start(title: Option<&str>) -> String {
    let mut s = String::new();
    if let Some(t) = title {
        let _ = writeln!(s, "{t}");
    }
    s
}

/// How a heading names the activity model.
pub fn activity(activity: Activity) -> &'static str {
    match activity {
        Activity::Ideal => "ideal activities (γ = 1)",
        Activity::Davies => "Davies activities",
    }
}

/// Ends the table `s`: a blank line and one line per file in `written` (if any), then a blank
/// line and `caution`.
pub fn finish(mut s: String, written: &[String], caution: &str) -> String {
    if !written.is_empty() {
        let _ = writeln!(s);
        for w in written {
            let _ = writeln!(s, "{w}");
        }
    }
    let _ = writeln!(s);
    let _ = writeln!(s, "{caution}");
    s
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn frame() {
        assert_eq!(start(None), "");
        assert_eq!(start(Some("Example")), "Example\n");
        assert_eq!(activity(Activity::Ideal), "ideal activities (γ = 1)");
        assert_eq!(activity(Activity::Davies), "Davies activities");
        assert_eq!(finish("body\n".to_owned(), &[], "Careful."), "body\n\nCareful.\n");
        let written = ["wrote a".to_owned(), "wrote b".to_owned()];
        assert_eq!(finish(String::new(), &written, "Careful."), "\nwrote a\nwrote b\n\nCareful.\n");
    }
}
