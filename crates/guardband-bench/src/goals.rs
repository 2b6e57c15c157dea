//! The performance goals the bench holds the product to, each printed with
//! its measured figure and whether it is met.

/// One goal and what was measured for it.
#[derive(Debug, Clone)]
pub struct Goal {
    /// The goal, as a reader of the contributor guide knows it.
    pub what: String,
    /// The measured figure, with the figures it was compared against.
    pub figure: String,
    /// Met, not met, or not measured on this machine (why is in `figure`).
    pub met: Option<bool>,
}

/// The goals gathered over one bench run.
#[derive(Debug, Default)]
pub struct Goals(pub Vec<Goal>);

impl Goals {
    /// A goal whose outcome was measured.
    pub fn judge(&mut self, what: impl Into<String>, figure: impl Into<String>, met: bool) {
        self.0.push(Goal {
            what: what.into(),
            figure: figure.into(),
            met: Some(met),
        });
    }

    /// A goal that could not be measured here, and why.
    pub fn unmeasured(&mut self, what: impl Into<String>, why: impl Into<String>) {
        self.0.push(Goal {
            what: what.into(),
            figure: why.into(),
            met: None,
        });
    }

    /// The table printed at the end of the run.
    pub fn table(&self) -> String {
        let width = self.0.iter().map(|g| g.what.len()).max().unwrap_or(0);
        let mut out = String::new();
        for g in &self.0 {
            let verdict = match g.met {
                Some(true) => "met",
                Some(false) => "not met",
                None => "not measured",
            };
            out.push_str(&format!(
                "{:<width$}  {:<12}  {}\n",
                g.what, verdict, g.figure
            ));
        }
        let met = self.0.iter().filter(|g| g.met == Some(true)).count();
        out.push_str(&format!("{met} of {} goals met\n", self.0.len()));
        out
    }
}

#[cfg(test)]
mod tests {
    use super::Goals;

    #[test]
    fn the_table_says_met_not_met_and_not_measured() {
        let mut g = Goals::default();
        g.judge("fast", "1 ms < 5 ms", true);
        g.judge("small", "600 MB > 500 MB", false);
        g.unmeasured("counted", "valgrind is not installed");
        let t = g.table();
        // Goals padded to the longest (7), verdicts to 12.
        assert!(t.contains("fast     met           1 ms < 5 ms\n"), "{t}");
        assert!(
            t.contains("small    not met       600 MB > 500 MB\n"),
            "{t}"
        );
        assert!(t.contains("counted  not measured  valgrind"), "{t}");
        assert!(t.ends_with("1 of 3 goals met\n"), "{t}");
    }
}
