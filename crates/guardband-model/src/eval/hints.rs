//! Help for the slips a designer makes most: `+-` for `±`, a unit on one
//! end of a range only, `C` (coulomb) for `°C`. Each replaces the help of
//! the error just reported with the spelling that was most likely meant.

use super::Evaluator;
use super::tolerance::{first_unit, plain_number};
use crate::FileId;
use guardband_syntax::Expr;

impl Evaluator<'_> {
    /// Sets the help of the last diagnostic pushed.
    fn replace_help(&mut self, help: String) {
        if let Some(last) = self.diagnostics.last_mut() {
            last.help = Some(help);
        }
    }

    /// `3.3 V +- 2 %` parses as `3.3 V + (-2 %)`: suggest `±`.
    pub(super) fn plus_minus_hint(&mut self, file: FileId, a: &Expr, b: &Expr) {
        let text = &self.ws.file(file).text;
        let between = text.get(a.span.end..b.span.start).unwrap_or("");
        if between.trim() == "+" && text[b.span.start..].starts_with('-') {
            let base = text.get(a.span.clone()).unwrap_or("").trim();
            let tol = text
                .get(b.span.clone())
                .unwrap_or("")
                .trim_start_matches('-')
                .trim();
            self.replace_help(format!(
                "`+-` reads as plus, then minus; write `±` or `+/-` for a tolerance: `{base} ± {tol}`"
            ));
        }
    }

    /// `0 .. 500 mA`: the unit belongs on both ends.
    pub(super) fn unit_on_one_end(&mut self, file: FileId, a: &Expr, b: &Expr) {
        let (plain, unit, plain_first) = match (plain_number(a), plain_number(b)) {
            (Some(_), None) => (a, first_unit(b), true),
            (None, Some(_)) => (b, first_unit(a), false),
            _ => return,
        };
        let Some(unit) = unit else { return };
        let number = self.text(file, &plain.span);
        let other = self.text(file, if plain_first { &b.span } else { &a.span });
        let fixed = if plain_first {
            format!("{number} {unit} .. {other}")
        } else {
            format!("{other} .. {number} {unit}")
        };
        self.replace_help(format!(
            "a unit applies to one number only; write it on both ends: `{fixed}`"
        ));
    }

    /// `-40 C` where a temperature is expected: `C` is the coulomb.
    pub(super) fn coulomb_hint(&mut self, expr: &Expr) {
        if first_unit(expr) == Some("C") {
            self.replace_help(
                "`C` is the coulomb (a charge); write `°C` or `degC` for degrees Celsius"
                    .to_string(),
            );
        }
    }
}
