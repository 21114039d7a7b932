//! Model terms: the groups of design-matrix columns tested together, and
//! what each stands for.

use crate::job::{Baseline, EventKind};
use crate::period::{Period, SeasonBy};

/// What a design-matrix column stands for.
#[derive(Debug, Clone, PartialEq)]
pub enum TermKind {
    /// The constant column of ones.
    Intercept,
    /// A numeric predictor entered as it is.
    Numeric,
    /// The period index 1, 2, … of the date column.
    Trend,
    /// Season indicators against a baseline season, or one per season when
    /// `every_level`.
    Season {
        /// What seasons are counted by.
        by: SeasonBy,
        /// The baseline season, from 1.
        baseline: u32,
        /// Whether the job named the baseline.
        given: bool,
        /// Whether every season has its own indicator, the baseline's
        /// included: the first factor of a model without an intercept.
        every_level: bool,
    },
    /// The product of two earlier terms (numeric or categorical).
    Interaction {
        /// Index of the first term in `Design::terms`.
        left: usize,
        /// Index of the second term.
        right: usize,
    },
    /// The natural log of a numeric predictor, named `ln(column)`.
    Log,
    /// A numeric predictor `lag` periods earlier, named `column (lag k)`.
    Lag {
        /// Periods back.
        lag: u32,
    },
    /// An event over the periods, named after its key in the job.
    Event {
        /// Step, spike or ramp.
        kind: EventKind,
        /// Its periods (one for a step or ramp).
        at: Vec<Period>,
    },
    /// Sine and cosine pairs of the period index over a cycle of
    /// `per_cycle` periods, named `fourier sin 1`, `fourier cos 1`, ….
    Fourier {
        /// Periods in one cycle (12 months, 52.18 weeks, ... a year).
        per_cycle: f64,
        /// Number of pairs.
        pairs: u32,
    },
    /// A numeric predictor and its powers up to `degree`.
    Polynomial {
        /// Highest power.
        degree: u32,
    },
    /// A categorical predictor: one indicator per non-baseline level, or
    /// per level when `every_level`.
    Categorical {
        /// The baseline level.
        baseline: String,
        /// How it was chosen.
        chosen: Baseline,
        /// Every level found in the rows used, sorted, baseline included.
        levels: Vec<String>,
        /// Whether every level has its own indicator, the baseline's
        /// included: the first factor of a model without an intercept.
        every_level: bool,
    },
}

/// A model term: a group of design-matrix columns tested together.
#[derive(Debug, Clone, PartialEq)]
pub struct Term {
    /// "Intercept", "trend", "season", the column name, or for a
    /// polynomial "x (degree 3)".
    pub name: String,
    /// The source column the term reads (empty for the intercept; the date
    /// column for trend and season).
    pub column: String,
    /// What kind of term.
    pub kind: TermKind,
    /// Indices of this term's columns in the design matrix.
    pub columns: std::ops::Range<usize>,
}

impl Term {
    /// The term's columns against its baseline: all of them, less the
    /// baseline level's indicator when the term has one for every level.
    /// Interactions multiply these, so a factor coded in full for its own
    /// effect keeps treatment coding in its interactions, as the standard
    /// formula coding does when both main effects are in the model.
    pub fn contrast_columns(&self) -> Vec<usize> {
        let baseline = match &self.kind {
            TermKind::Categorical {
                every_level: true,
                baseline,
                levels,
                ..
            } => levels.iter().position(|l| l == baseline),
            TermKind::Season {
                every_level: true,
                baseline,
                ..
            } => Some(*baseline as usize - 1),
            _ => None,
        };
        self.columns
            .clone()
            .filter(|&j| Some(j - self.columns.start) != baseline)
            .collect()
    }
}
