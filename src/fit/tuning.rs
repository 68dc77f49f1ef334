//! The optimiser's tuning numbers, named in one place. Each was chosen by
//! measurement on the shipped demos and the seed-proof fixtures (BENCHMARKS.md
//! records what was tried); changing one changes fitted numbers.

/// A Nelder–Mead run: initial simplex size (η units) and iterations allowed
/// as `per_free × free + base`.
#[derive(Debug, Clone, Copy)]
pub struct SimplexRun {
    pub size: f64,
    pub per_free: u64,
    pub base: u64,
}

impl SimplexRun {
    /// (size, iterations) for `d` free hyperparameters.
    pub fn with(&self, d: u64) -> (f64, u64) {
        (self.size, self.per_free * d + self.base)
    }
}

/// The optimiser's settings.
#[derive(Debug, Clone, Copy)]
pub struct Tuning {
    /// Newton stops when the predicted fall is below this many noise floors.
    /// With scrambled Sobol draws the seed-to-seed error of a determined
    /// hyperparameter is a few hundredths of δ*, so the optimum is located to
    /// 1.4 % of δ* (√(2·10⁻⁴)); a hundredth of a floor (δ/δ* = 0.14) would let
    /// the stopping rule, not the draws, set the spread.
    pub newton_tol: f64,
    /// Newton iterations before Nelder–Mead takes over.
    pub newton_iterations: u64,
    /// Largest Newton step in any η coordinate (a trust region).
    pub newton_max_step: f64,
    /// Length (η units) of a descent step along a direction without positive
    /// curvature in Newton's method.
    pub flat_step: f64,
    /// A Newton step that finds no decrease when the predicted fall is below
    /// this many floors ends Newton there.
    pub stall: f64,
    /// Discrepancy, in noise floors, above which the Newton optimum is polished
    /// by Nelder–Mead: far from the beliefs the objective is rough on scales
    /// finer than the finite differences see.
    pub rough: f64,
    /// Nelder–Mead stages inside the refinement (rescue, polish, fallback) stop
    /// when the simplex's values differ by this many floors: they find the
    /// basin, and the polish after them solves ∇D = 0.
    pub simplex_tol: f64,
    /// The coarse local searches stop at a simplex spread of this many coarse
    /// floors (0.05 and 0.2 gave the same optima on the 60-row demo and 10
    /// seeds of the relapse-free demo).
    pub coarse_tol: f64,
    /// The coarse local searches' Nelder–Mead run.
    pub coarse_search: SimplexRun,
    /// Fresh-simplex restarts of every coarse search when the best of them
    /// ends more than `rough` coarse floors up (each kept while it gains a
    /// floor): one seed in 40 of the six-free fixture otherwise ended 17
    /// floors above the optimum.
    pub coarse_restarts: usize,
    /// Wide then narrow Nelder–Mead restarts of the rescue stages.
    pub rescue_wide: SimplexRun,
    pub rescue_narrow: SimplexRun,
    /// The narrow restart of the Newton fallback.
    pub fallback_narrow: SimplexRun,
    /// Coarse optima closer than this in every η coordinate share a basin.
    pub same_basin: f64,
    /// Gradient-root steps of the polish at the optimum.
    pub polish_iterations: usize,
}

/// The settings every fit uses.
pub const TUNING: Tuning = Tuning {
    newton_tol: 1e-4,
    newton_iterations: 8,
    newton_max_step: 0.5,
    flat_step: 0.25,
    stall: 0.5,
    rough: 10.0,
    simplex_tol: 0.01,
    coarse_tol: 0.1,
    coarse_search: SimplexRun {
        size: 0.6,
        per_free: 150,
        base: 100,
    },
    rescue_wide: SimplexRun {
        size: 0.2,
        per_free: 150,
        base: 100,
    },
    rescue_narrow: SimplexRun {
        size: 0.02,
        per_free: 100,
        base: 50,
    },
    fallback_narrow: SimplexRun {
        size: 0.05,
        per_free: 100,
        base: 50,
    },
    coarse_restarts: 3,
    same_basin: 0.3,
    polish_iterations: 3,
};
