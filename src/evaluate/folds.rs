//! Session-grouped splits: an untouched test share and k folds inside the rest.
//!
//! Splits are always by session, never by row (turns of one game are strongly correlated, so a
//! row split leaks — common practice). Strata are (winner seat, variant); within a stratum,
//! sessions are ordered by a seeded hash of their id, so the assignment depends neither on the
//! order of the files nor on where the set's folder is.

use crate::features::stable_hash;
use serde::{Deserialize, Serialize};
use std::collections::BTreeMap;

/// What the splitter needs to know about one finished session.
#[derive(Debug, Clone)]
pub struct SessionKey {
    /// Which copy of this id it is, when several sets given together share session ids
    /// (0 for the first set, in argument order, that holds the id).
    pub duplicate: u32,
    /// The session id.
    pub id: String,
    /// Winner seat, `None` for a draw.
    pub winner_seat: Option<usize>,
    /// The variant, when recorded.
    pub variant: Option<String>,
}

/// Where a session sits in a split.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
pub enum Role {
    /// In the untouched test share: no tuning ever sees it.
    Test,
    /// In the training part, in this fold (0-based) for cross-validation and cross-fitting.
    Fold(u8),
}

/// A split of finished sessions into a test share and training folds.
#[derive(Debug, Clone, PartialEq, Eq, Serialize, Deserialize)]
pub struct Split {
    /// One role per session, in the order the keys were given.
    pub roles: Vec<Role>,
    /// Number of folds in the training part.
    pub folds: usize,
}

impl Split {
    /// Indices of test sessions.
    pub fn test(&self) -> Vec<usize> {
        self.indices(|r| r == Role::Test)
    }
    /// Indices of training sessions (every fold).
    pub fn train(&self) -> Vec<usize> {
        self.indices(|r| r != Role::Test)
    }
    /// Indices of training sessions in fold `k`.
    pub fn fold(&self, k: usize) -> Vec<usize> {
        self.indices(|r| r == Role::Fold(k as u8))
    }
    /// Indices of training sessions outside fold `k`.
    pub fn outside_fold(&self, k: usize) -> Vec<usize> {
        self.indices(|r| matches!(r, Role::Fold(f) if f as usize != k))
    }
    fn indices(&self, keep: impl Fn(Role) -> bool) -> Vec<usize> {
        (0..self.roles.len())
            .filter(|&i| keep(self.roles[i]))
            .collect()
    }
}

/// A stratum: winner seat and variant.
type Stratum = (Option<usize>, Option<String>);

/// Split sessions: about `test_share` of each stratum to the test set, the rest dealt into
/// `folds` folds round-robin in hash order (so every fold gets its share of every stratum).
pub fn split_sessions(keys: &[SessionKey], test_share: f64, folds: usize, seed: u64) -> Split {
    let folds = folds.max(1);
    let mut strata: BTreeMap<Stratum, Vec<(u64, usize)>> = BTreeMap::new();
    for (i, k) in keys.iter().enumerate() {
        // The id alone (not the folder name) decides, so moving or renaming a set's folder
        // does not change its split.
        strata
            .entry((k.winner_seat, k.variant.clone()))
            .or_default()
            .push((stable_hash(seed, &k.id, k.duplicate as u64), i));
    }
    let mut roles = vec![Role::Fold(0); keys.len()];
    let share = test_share.clamp(0.0, 0.9);
    // Carry the fractional test count across strata so small strata still add up to the share.
    let mut carry = stable_hash(seed, "carry", 1) as f64 / u64::MAX as f64;
    let mut next_fold = (stable_hash(seed, "fold", 2) % folds as u64) as usize;
    for (_, mut members) in strata {
        members.sort_unstable();
        for (_, i) in members {
            carry += share;
            if carry >= 1.0 {
                carry -= 1.0;
                roles[i] = Role::Test;
            } else {
                roles[i] = Role::Fold(next_fold as u8);
                next_fold = (next_fold + 1) % folds;
            }
        }
    }
    Split { roles, folds }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn keys(n: usize) -> Vec<SessionKey> {
        (0..n)
            .map(|i| SessionKey {
                duplicate: 0,
                id: format!("s{i}"),
                winner_seat: Some(i % 3 % 2),
                variant: Some(if i % 5 == 0 { "B" } else { "A" }.into()),
            })
            .collect()
    }

    #[test]
    fn test_share_and_fold_sizes_are_close_to_asked() {
        let k = keys(1000);
        let s = split_sessions(&k, 0.2, 5, 1);
        let test = s.test().len();
        assert!((190..=210).contains(&test), "{test}");
        for f in 0..5 {
            let n = s.fold(f).len();
            assert!((150..=170).contains(&n), "fold {f}: {n}");
        }
    }

    #[test]
    fn strata_are_balanced_between_test_and_train() {
        let k = keys(1000);
        let s = split_sessions(&k, 0.2, 5, 3);
        let seat1_test = s
            .test()
            .iter()
            .filter(|&&i| k[i].winner_seat == Some(1))
            .count();
        let seat1_all = k.iter().filter(|x| x.winner_seat == Some(1)).count();
        let share = seat1_test as f64 / seat1_all as f64;
        assert!((0.18..=0.22).contains(&share), "{share}");
    }

    #[test]
    fn assignment_does_not_depend_on_file_order() {
        let k = keys(300);
        let s = split_sessions(&k, 0.2, 4, 9);
        let mut reversed = k.clone();
        reversed.reverse();
        let r = split_sessions(&reversed, 0.2, 4, 9);
        for i in 0..k.len() {
            assert_eq!(s.roles[i], r.roles[k.len() - 1 - i]);
        }
    }

    #[test]
    fn different_seeds_give_different_splits() {
        let k = keys(300);
        assert_ne!(split_sessions(&k, 0.2, 4, 1), split_sessions(&k, 0.2, 4, 2));
    }
}
