//! The removal plan: which features to remove, step by step, to bring the
//! whole-set AUC below the target, with features that rebuild each other
//! (redundancy groups) removed together.
//!
//! Drop-one measures a feature's unique contribution: when two features carry
//! nearly the same information, removing either alone costs little, so a
//! plan that only removes single features by their drop-one cost never finds
//! the pair. Each step therefore refills its candidates from the current
//! attacker (its most-used features, every flagged feature, both members of
//! every joint column), groups the candidates that rebuild each other, and
//! weighs every single candidate and every group.

use super::ScanOptions;
use super::evaluate::{Evaluation, Target};
use super::pairs::pairs_with;
use super::utility::{Utility, tradeoff};
use super::whole::{Attack, AttackInputs, WorkingSet, attack, without, working_set};
use crate::data::EncodedColumn;
use crate::report::{AucInterval, FrontierPoint, RedundancyGroup, RemovalStep};
use crate::stats::contingency::Contingency;
use crate::stats::information::{entropy, miller_madow_mutual_information};
use rayon::prelude::*;
use std::collections::HashMap;

/// Share of information from which two features count as rebuilding each
/// other: Miller–Madow mutual information I(X; Y) over min(H(X), H(Y)) ≥ ½,
/// i.e. one feature tells at least half of what there is to know about the
/// other. Our choice: a group is only a candidate, and a step is taken only
/// when its refit lowers the AUC, so a loose line costs refits, not errors.
pub const REDUNDANCY: f64 = 0.5;

/// What the plan needs besides the current attack.
pub struct PlanInputs<'a, 'b> {
    pub inputs: &'a AttackInputs<'b>,
    pub target: &'a Target<'b>,
    pub options: &'a ScanOptions,
    /// Features the single-feature scan flagged.
    pub flagged: &'a [usize],
    /// The outcome model, when the scan has an outcome: the plan then weighs
    /// leakage removed against utility lost (see [`tradeoff`]).
    pub utility: Option<&'a Utility<'b>>,
}

/// The plan's steps, whether it reached the target, the groups it tested,
/// the full-width check of its result and, with an outcome, its frontier.
#[derive(Default)]
pub struct Plan {
    pub steps: Vec<RemovalStep>,
    pub reached: bool,
    pub groups: Vec<RedundancyGroup>,
    pub check: Option<AucInterval>,
    pub frontier: Vec<FrontierPoint>,
}

/// The plan's rule as the report states it.
pub fn plan_rule(options: &ScanOptions, with_outcome: bool) -> String {
    let rule = format!(
        "Each step refits the attacker without each candidate: the {} features the current \
         attacker uses most (by split gain), every flagged feature and both members of every \
         joint column, plus each group of candidates that rebuild each other (one carries at \
         least {:.0}% of the other's information, Miller–Madow mutual information over the \
         smaller entropy), removed as one. Features the current attacker never splits on are \
         not candidates: removing them leaves the AUC unchanged. Without an outcome, the step \
         taken is the one that lowers the AUC most per feature removed, and only if it lowers \
         the AUC; otherwise the plan stops. The target counts as reached when the upper bound of the 95% interval \
         of the AUC after a step is below {:.2}. Steps refit on the screened set (see drop-one); \
         the result is then refitted with every feature not removed, and when that check's \
         upper bound is not below the target, the plan screens again from the check and goes on.",
        options.removal_candidates,
        REDUNDANCY * 100.0,
        options.target_auc
    );
    if !with_outcome {
        return rule;
    }
    format!(
        "{rule} With an outcome, each removal that lowers the AUC is also weighed by the outcome \
         AUC it costs (the boosted model for the outcome refitted on every feature not removed, \
         at full width, on the outcome's own folds): the step taken removes the most leakage \
         AUC per unit of outcome AUC lost, losses under {:.3} per feature removed counting as \
         {:.3} per feature (so among removals that cost nothing the rule is the one without an \
         outcome). A removal that does not lower the leakage AUC is never taken, whatever it \
         costs.",
        super::utility::LOSS_FLOOR,
        super::utility::LOSS_FLOOR
    )
}

/// Leakage AUC a removal must remove for the plan to weigh its utility
/// cost: smaller drops are within the noise of a refit (the screening
/// tolerance of drop-one, [`super::whole::SCREEN_TOLERANCE`]), and a free
/// removal of noise would otherwise outrank a real proxy whose removal costs
/// utility. When no removal clears it, the plan steps as without an outcome.
const MIN_LEAKAGE_DROP: f64 = super::whole::SCREEN_TOLERANCE;

/// Full-width checks at most, each followed by a new screen when it fails.
const MAX_CHECKS: usize = 3;

/// An evaluated removal: the measures after it and each feature's split gain.
#[derive(Clone)]
struct Outcome {
    evaluation: Evaluation,
    gains: Vec<f64>,
}

impl Outcome {
    fn of(attack: &Attack) -> Self {
        Self {
            evaluation: attack.evaluation.clone(),
            gains: attack.gains.clone(),
        }
    }

    fn auc(&self) -> f64 {
        self.evaluation.estimate.auc
    }
}

/// Whether an AUC interval lies wholly below the target.
fn below_target(evaluation: &Evaluation, target_auc: f64) -> bool {
    evaluation.interval().auc_high < target_auc
}

/// The plan's working state.
struct Planner<'p, 'a, 'b> {
    plan: &'p PlanInputs<'a, 'b>,
    /// Features the current attacker is fitted on (the screened set less the removals).
    remaining: Vec<usize>,
    /// Features removed by the steps so far.
    removed: Vec<usize>,
    current: Outcome,
    /// Whether `current` is exactly the attacker on every unremoved feature
    /// (the features left out were never split on, and nothing was removed since).
    exact: bool,
    /// Outcomes by the (sorted) feature set fitted.
    tried: HashMap<Vec<usize>, Outcome>,
    redundancy: HashMap<(usize, usize), f64>,
    /// Outcome measures of every unremoved feature (with an outcome).
    utility_now: Option<Evaluation>,
}

/// Greedy plan starting from the working set of the full attack; `first_step`
/// holds the drop-one refits already made (the working set without one feature).
pub fn removal_plan(
    plan: &PlanInputs<'_, '_>,
    full: &Attack,
    working: WorkingSet,
    first_step: Vec<(usize, Attack)>,
    progress: &dyn super::Progress,
) -> Plan {
    let features = plan.inputs.features;
    let mut planner = Planner {
        plan,
        current: Outcome::of(working.baseline.as_ref().unwrap_or(full)),
        tried: first_step
            .iter()
            .map(|(i, a)| (without(&working.features, &[*i]), Outcome::of(a)))
            .collect(),
        exact: working.baseline.is_none(),
        remaining: working.features,
        removed: Vec::new(),
        redundancy: HashMap::new(),
        utility_now: plan
            .utility
            .and_then(|u| u.of(&all_features(features.len()))),
    };
    let mut result = Plan::default();
    let mut frontier = planner.utility_now.as_ref().map(|utility| {
        vec![FrontierPoint {
            steps: 0,
            removed: Vec::new(),
            leakage: full.evaluation.interval(),
            outcome: utility.interval(),
        }]
    });
    progress.stage(
        &format!("removal plan: {}", plan.target.attribute.name),
        features.len() as u64,
    );
    let mut checks = 0;
    loop {
        if below_target(&planner.current.evaluation, plan.options.target_auc) {
            if planner.exact || planner.remaining.len() + planner.removed.len() == features.len() {
                result.reached = true;
                break;
            }
            let Some(check) = planner.check() else { break };
            result.check = Some(check.evaluation.interval());
            if below_target(&check.evaluation, plan.options.target_auc) {
                result.reached = true;
                break;
            }
            checks += 1;
            if checks == MAX_CHECKS {
                break;
            }
            planner.rescreen(&check);
            continue;
        }
        let Some(step) = planner.step(&mut result.groups) else {
            break;
        };
        if let (Some(points), Some(utility)) = (frontier.as_mut(), &planner.utility_now) {
            points.push(FrontierPoint {
                steps: points.len(),
                removed: planner.removed_names(),
                leakage: planner.current.evaluation.interval(),
                outcome: utility.interval(),
            });
        }
        result.steps.push(step);
        progress.advance(1);
    }
    result.frontier = frontier.unwrap_or_default();
    result
}

/// Every feature index of a table with `n` features.
fn all_features(n: usize) -> Vec<usize> {
    (0..n).collect()
}

impl Planner<'_, '_, '_> {
    /// Every feature not removed, at full width.
    fn unremoved(&self) -> Vec<usize> {
        without(
            &all_features(self.plan.inputs.features.len()),
            &self.removed,
        )
    }

    /// Names of the features removed so far, in plan order.
    fn removed_names(&self) -> Vec<String> {
        let features = self.plan.inputs.features;
        self.removed
            .iter()
            .map(|&i| features[i].name.clone())
            .collect()
    }

    /// The attacker on every feature the plan has not removed.
    fn check(&self) -> Option<Attack> {
        attack(self.plan.inputs, &self.unremoved(), self.plan.target)
    }

    /// A new working set screened from a failed check.
    fn rescreen(&mut self, check: &Attack) {
        let subset = self.unremoved();
        let working = working_set(
            self.plan.inputs,
            self.plan.target,
            self.plan.flagged,
            check,
            &subset,
        );
        self.current = Outcome::of(working.baseline.as_ref().unwrap_or(check));
        self.exact = working.baseline.is_none();
        self.remaining = working.features;
    }

    /// Candidates: the current attacker's most-used features, flagged
    /// features and joint members, all among the remaining features the
    /// current attacker uses.
    fn pool(&self) -> Vec<usize> {
        let used: Vec<usize> = self
            .remaining
            .iter()
            .copied()
            .filter(|&i| self.current.gains[i] > 0.0)
            .collect();
        let mut by_gain = used.clone();
        by_gain.sort_by(|&a, &b| {
            self.current.gains[b]
                .total_cmp(&self.current.gains[a])
                .then(a.cmp(&b))
        });
        let joints = &self.plan.inputs.joints.columns;
        let mut pool: Vec<usize> = by_gain
            .into_iter()
            .take(self.plan.options.removal_candidates)
            .chain(
                used.iter()
                    .copied()
                    .filter(|i| self.plan.flagged.contains(i)),
            )
            .chain(
                used.iter()
                    .copied()
                    .filter(|&i| joints.iter().any(|(a, b, _)| *a == i || *b == i)),
            )
            .collect();
        pool.sort_unstable();
        pool.dedup();
        pool
    }

    /// Connected groups (two or more) of candidates that rebuild each other.
    fn groups(&mut self, pool: &[usize]) -> Vec<(Vec<usize>, f64)> {
        let features = self.plan.inputs.features;
        let groupable: Vec<usize> = pool
            .iter()
            .copied()
            .filter(|&i| pairs_with(&features[i]))
            .collect();
        let missing: Vec<(usize, usize)> = groupable
            .iter()
            .enumerate()
            .flat_map(|(x, &a)| groupable[x + 1..].iter().map(move |&b| (a, b)))
            .filter(|pair| !self.redundancy.contains_key(pair))
            .collect();
        let computed: Vec<((usize, usize), f64)> = missing
            .par_iter()
            .map(|&(a, b)| ((a, b), redundancy(&features[a], &features[b])))
            .collect();
        self.redundancy.extend(computed);
        let linked = |a: usize, b: usize| self.redundancy[&(a.min(b), a.max(b))] >= REDUNDANCY;
        let mut groups = Vec::new();
        let mut placed = vec![false; groupable.len()];
        for start in 0..groupable.len() {
            if placed[start] {
                continue;
            }
            let mut members = vec![groupable[start]];
            placed[start] = true;
            let mut next = 0;
            while next < members.len() {
                for (x, &candidate) in groupable.iter().enumerate() {
                    if !placed[x] && linked(members[next], candidate) {
                        placed[x] = true;
                        members.push(candidate);
                    }
                }
                next += 1;
            }
            if members.len() >= 2 {
                members.sort_unstable();
                let weakest = members
                    .iter()
                    .enumerate()
                    .flat_map(|(x, &a)| members[x + 1..].iter().map(move |&b| (a, b)))
                    .map(|(a, b)| self.redundancy[&(a, b)])
                    .fold(f64::INFINITY, f64::min);
                groups.push((members, weakest));
            }
        }
        groups
    }

    /// The outcome of also removing `removal`: cached, chance when nothing is
    /// left, otherwise a refit.
    fn outcome(&self, removal: &[usize]) -> Option<Outcome> {
        let left = without(&self.remaining, removal);
        if let Some(known) = self.tried.get(&left) {
            return Some(known.clone());
        }
        if left.is_empty() {
            return Some(Outcome {
                evaluation: chance_evaluation(&self.current.evaluation),
                gains: vec![0.0; self.plan.inputs.features.len()],
            });
        }
        attack(self.plan.inputs, &left, self.plan.target).map(|a| Outcome::of(&a))
    }

    /// Weighs every candidate and group; takes, among the removals that
    /// lower the AUC, the one that lowers it most per feature removed or,
    /// with an outcome, per unit of outcome AUC lost ([`tradeoff`]).
    fn step(&mut self, groups_seen: &mut Vec<RedundancyGroup>) -> Option<RemovalStep> {
        let pool = self.pool();
        let groups = self.groups(&pool);
        let moves: Vec<Vec<usize>> = pool
            .iter()
            .map(|&i| vec![i])
            .chain(groups.iter().map(|(g, _)| g.clone()))
            .collect();
        let outcomes: Vec<Option<Outcome>> = moves.par_iter().map(|m| self.outcome(m)).collect();
        for (m, outcome) in moves.iter().zip(&outcomes) {
            if let Some(o) = outcome {
                self.tried.insert(without(&self.remaining, m), o.clone());
            }
        }
        self.record_groups(&groups, &moves, &outcomes, groups_seen);
        let before = self.current.auc();
        let mut lowering: Vec<(&Vec<usize>, Outcome)> = moves
            .iter()
            .zip(outcomes)
            .filter_map(|(m, o)| Some((m, o?)))
            .filter(|(_, o)| o.auc() < before)
            .collect();
        let clear = |o: &Outcome| before - o.auc() > MIN_LEAKAGE_DROP;
        let weigh = self.utility_now.is_some() && lowering.iter().any(|(_, o)| clear(o));
        if weigh {
            lowering.retain(|(_, o)| clear(o));
        }
        let utilities = self.utilities_after(&lowering, weigh);
        let ((best, outcome), utility) =
            lowering
                .into_iter()
                .zip(utilities)
                .max_by(|((ma, oa), ua), ((mb, ob), ub)| {
                    self.rate(before, ma, oa, ua.as_ref())
                        .total_cmp(&self.rate(before, mb, ob, ub.as_ref()))
                        .then(mb.len().cmp(&ma.len()))
                        .then(mb.cmp(ma))
                })?;
        let best = best.clone();
        self.remaining.retain(|i| !best.contains(i));
        self.removed.extend(&best);
        self.exact = false;
        self.current = outcome;
        if self.utility_now.is_some() {
            self.utility_now = utility.or_else(|| self.plan.utility?.of(&self.unremoved()));
        }
        let names: Vec<String> = best
            .iter()
            .map(|&i| self.plan.inputs.features[i].name.clone())
            .collect();
        let interval = self.current.evaluation.interval();
        let outcome_interval = self.utility_now.as_ref().map(Evaluation::interval);
        Some(RemovalStep {
            remove: names.join(" + "),
            auc_after: interval.auc,
            auc_low: interval.auc_low,
            auc_high: interval.auc_high,
            features: names,
            auc_before: Some(before),
            outcome_auc_after: outcome_interval.map(|i| i.auc),
            outcome_auc_low: outcome_interval.map(|i| i.auc_low),
            outcome_auc_high: outcome_interval.map(|i| i.auc_high),
        })
    }

    /// The outcome measures after each removal (every unremoved feature but
    /// the removal's) when `weigh`ing utility; `None` each otherwise.
    fn utilities_after(
        &self,
        removals: &[(&Vec<usize>, Outcome)],
        weigh: bool,
    ) -> Vec<Option<Evaluation>> {
        match self.plan.utility {
            Some(utility) if weigh => {
                let unremoved = self.unremoved();
                removals
                    .par_iter()
                    .map(|(m, _)| utility.of(&without(&unremoved, m)))
                    .collect()
            }
            _ => vec![None; removals.len()],
        }
    }

    /// What a removal is worth: with its outcome measures, leakage AUC
    /// removed per unit of outcome AUC lost ([`tradeoff`]); otherwise
    /// leakage AUC removed per feature.
    fn rate(
        &self,
        before: f64,
        removal: &[usize],
        outcome: &Outcome,
        utility: Option<&Evaluation>,
    ) -> f64 {
        let drop = before - outcome.auc();
        match (&self.utility_now, utility) {
            (Some(now), Some(after)) => {
                tradeoff(drop, now.estimate.auc - after.estimate.auc, removal.len())
            }
            _ => drop / removal.len() as f64,
        }
    }

    /// Reports each group the first time it is weighed, with what removing
    /// it together and each member alone did at that step.
    fn record_groups(
        &self,
        groups: &[(Vec<usize>, f64)],
        moves: &[Vec<usize>],
        outcomes: &[Option<Outcome>],
        seen: &mut Vec<RedundancyGroup>,
    ) {
        let features = self.plan.inputs.features;
        let auc_of = |m: &[usize]| {
            moves
                .iter()
                .position(|x| x == m)
                .and_then(|p| outcomes[p].as_ref())
                .map(Outcome::auc)
        };
        for (members, weakest) in groups {
            let names: Vec<String> = members.iter().map(|&i| features[i].name.clone()).collect();
            let Some(together) = moves
                .iter()
                .position(|m| m == members)
                .and_then(|p| outcomes[p].as_ref())
            else {
                continue;
            };
            if seen.iter().any(|g| g.features == names) {
                continue;
            }
            seen.push(RedundancyGroup {
                features: names,
                redundancy: *weakest,
                auc_without_group: together.evaluation.interval(),
                auc_without_each: members.iter().map(|&i| auc_of(&[i])).collect(),
            });
        }
    }
}

/// Miller–Madow mutual information of two features' codes over the smaller
/// of their plug-in entropies (0 when either is constant): the share of one
/// feature's information the other carries. The correction (Miller 1955)
/// keeps two unrelated many-level features near 0 on few rows.
pub fn redundancy(a: &EncodedColumn, b: &EncodedColumn) -> f64 {
    let table = Contingency::from_codes(&a.codes, a.n_levels, &b.codes, b.n_levels);
    let smaller = entropy(&table.row_totals()).min(entropy(&table.col_totals()));
    if smaller <= 0.0 {
        return 0.0;
    }
    (miller_madow_mutual_information(&table) / smaller).clamp(0.0, 1.0)
}

/// With no feature left, an attacker can only guess: AUC ½ exactly.
pub fn chance_evaluation(full: &Evaluation) -> Evaluation {
    let mut chance = full.clone();
    chance.estimate.auc = 0.5;
    chance.estimate.low = 0.5;
    chance.estimate.high = 0.5;
    chance.estimate.se = 0.0;
    chance.estimate.variance = 0.0;
    chance.hand_till = chance.hand_till.map(|_| 0.5);
    chance
}
