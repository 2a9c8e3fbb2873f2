//! The linear program of the frontier search; the only file that knows good_lp.
//!
//! Owns: a chance-constrained choice of one option per part type, relaxed
//! to a linear program by replacing the chance constraint with its
//! conditional-value-at-risk (CVaR) bound (Rockafellar & Uryasev 2000,
//! "Optimization of conditional value-at-risk", J. Risk 2(3); Nemirovski &
//! Shapiro 2006, "Convex approximations of chance constrained programs",
//! SIAM J. Optim. 17(4)). With `x[p][o]` the weight of option `o` of part
//! type `p` and `D[p][o][t]` its down hours on trial `t`, the loss of trial
//! `t` is `L_t = sum x D - B` with `B` the down hours the target allows;
//!
//! ```text
//! minimise   sum x[p][o] c[p][o]
//! subject to sum_o x[p][o] = 1 for every p,  x >= 0,
//!            eta + 1 / ((1 - alpha) N) sum_t z_t <= 0,
//!            z_t >= L_t - eta,  z_t >= 0,
//!            sum x[p][o] capital[p][o] <= budget (when given).
//! ```
//!
//! CVaR <= 0 implies P(L <= 0) >= alpha, so every feasible point meets the
//! chance on these trials. The solution is fractional in a few part types;
//! the caller rounds it and checks every rounding by simulation.
//! May use: good_lp (pure-Rust microlp solver).

use good_lp::{Expression, ProblemVariables, Solution, SolverModel, microlp, variable};

/// One candidate option of one part type, as the LP sees it.
#[derive(Debug, Clone)]
pub struct LpOption<'a> {
    /// Mean cost over the horizon.
    pub cost: f64,
    /// Capital of the initial stock.
    pub capital: f64,
    /// Down hours per trial (the LP's trial subsample).
    pub down: &'a [f64],
}

/// Why the LP gave no answer.
#[derive(Debug, thiserror::Error)]
pub enum LpError {
    #[error("the linear program has no feasible point at chance {0}")]
    Infeasible(f64),
    #[error("the linear program solver failed: {0}")]
    Solver(String),
}

/// Solve the CVaR program for chance level `alpha` in (0, 1); returns the
/// weights `x[p][o]`.
///
/// # Errors
/// When the program is infeasible or the solver fails.
pub fn solve_cvar(
    parts: &[Vec<LpOption<'_>>],
    allowed_down: f64,
    alpha: f64,
    capital_budget: Option<f64>,
) -> Result<Vec<Vec<f64>>, LpError> {
    let n_trials = parts
        .first()
        .and_then(|p| p.first())
        .map_or(0, |o| o.down.len());
    let mut vars = ProblemVariables::new();
    let x: Vec<Vec<_>> = parts
        .iter()
        .map(|opts| {
            opts.iter()
                .map(|_| vars.add(variable().min(0.0).max(1.0)))
                .collect()
        })
        .collect();
    let z: Vec<_> = (0..n_trials)
        .map(|_| vars.add(variable().min(0.0)))
        .collect();
    let eta = vars.add(variable());
    // Scale costs so the solver works with numbers near 1.
    let scale = parts
        .iter()
        .flat_map(|o| o.iter().map(|x| x.cost.abs()))
        .fold(0.0, f64::max)
        .max(1.0);
    let mut objective = Expression::with_capacity(x.iter().map(Vec::len).sum());
    for (opts, xs) in parts.iter().zip(&x) {
        for (o, &v) in opts.iter().zip(xs) {
            objective.add_mul(o.cost / scale, v);
        }
    }
    let mut problem = vars.minimise(objective).using(microlp);
    for xs in &x {
        let mut e = Expression::with_capacity(xs.len());
        for &v in xs {
            e.add_mul(1.0, v);
        }
        problem = problem.with(e.eq(1.0));
    }
    // Down hours scaled by the allowance so rows are of order 1.
    let b = allowed_down.max(1e-9);
    let mut cvar = Expression::with_capacity(n_trials + 1);
    cvar.add_mul(1.0, eta);
    let w = 1.0 / ((1.0 - alpha) * n_trials.max(1) as f64);
    for (t, &zt) in z.iter().enumerate() {
        cvar.add_mul(w, zt);
        // z_t - sum x D / b + eta >= -1
        let mut row = Expression::with_capacity(1 + x.iter().map(Vec::len).sum::<usize>());
        row.add_mul(1.0, zt);
        row.add_mul(1.0, eta);
        for (opts, xs) in parts.iter().zip(&x) {
            for (o, &v) in opts.iter().zip(xs) {
                let d = o.down[t] / b;
                if d != 0.0 {
                    row.add_mul(-d, v);
                }
            }
        }
        problem = problem.with(row.geq(-1.0));
    }
    problem = problem.with(cvar.leq(0.0));
    if let Some(budget) = capital_budget {
        let mut e = Expression::with_capacity(x.iter().map(Vec::len).sum());
        for (opts, xs) in parts.iter().zip(&x) {
            for (o, &v) in opts.iter().zip(xs) {
                e.add_mul(o.capital / budget.max(1.0), v);
            }
        }
        problem = problem.with(e.leq(1.0));
    }
    match problem.solve() {
        Ok(sol) => Ok(x
            .iter()
            .map(|xs| xs.iter().map(|&v| sol.value(v)).collect())
            .collect()),
        Err(good_lp::ResolutionError::Infeasible) => Err(LpError::Infeasible(alpha)),
        Err(e) => Err(LpError::Solver(e.to_string())),
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn picks_the_cheapest_option_that_meets_the_chance() {
        // One part type, three options; allowance 10 down hours.
        // Option 0: cheap, down 20 on every trial (never meets).
        // Option 1: middle, down 5 on 9 of 10 trials and 30 on one.
        // Option 2: dear, down 1 always.
        let d0 = vec![20.0; 10];
        let mut d1 = vec![5.0; 10];
        d1[3] = 30.0;
        let d2 = vec![1.0; 10];
        let parts = vec![vec![
            LpOption {
                cost: 1.0,
                capital: 0.0,
                down: &d0,
            },
            LpOption {
                cost: 2.0,
                capital: 0.0,
                down: &d1,
            },
            LpOption {
                cost: 5.0,
                capital: 0.0,
                down: &d2,
            },
        ]];
        // At alpha = 0.5, CVaR of option 1 = mean of the worst half of
        // losses (5-10 = -5 x4, 30-10 = 20 x1) = (4 x -5 + 20) / 5 = 0 <= 0.
        let x = solve_cvar(&parts, 10.0, 0.5, None).unwrap();
        assert!(x[0][1] > 0.99, "{x:?}");
        // At alpha = 0.95 option 1's worst trial dominates: mix towards 2.
        let x = solve_cvar(&parts, 10.0, 0.95, None).unwrap();
        assert!(x[0][2] > 0.5, "{x:?}");
    }
}
