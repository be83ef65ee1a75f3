//! Which rows sit in which leaf: one index array in which every leaf owns a contiguous,
//! increasing segment, plus each row's leaf id.

/// Leaf id of rows outside the current tree's sample.
pub const OUT_OF_BAG: u32 = u32::MAX;

/// The rows of every leaf of the tree being grown.
#[derive(Debug, Default)]
pub struct DataPartition {
    indices: Vec<u32>,
    begin: Vec<usize>,
    count: Vec<usize>,
    leaf_of: Vec<u32>,
    scratch: Vec<u32>,
}

impl DataPartition {
    /// Puts every row of `rows` (increasing) into leaf 0, for a tree over `n_rows` rows.
    pub fn reset(&mut self, n_rows: usize, rows: Option<&[u32]>) {
        self.indices.clear();
        self.leaf_of.clear();
        match rows {
            Some(r) => {
                self.indices.extend_from_slice(r);
                self.leaf_of.resize(n_rows, OUT_OF_BAG);
                for &i in r {
                    self.leaf_of[i as usize] = 0;
                }
            }
            None => {
                self.indices.extend(0..n_rows as u32);
                self.leaf_of.resize(n_rows, 0);
            }
        }
        self.begin.clear();
        self.count.clear();
        self.begin.push(0);
        self.count.push(self.indices.len());
    }

    /// The rows of `leaf`, increasing.
    pub fn rows(&self, leaf: usize) -> &[u32] {
        &self.indices[self.begin[leaf]..self.begin[leaf] + self.count[leaf]]
    }

    /// Leaf id of every row (`OUT_OF_BAG` for rows not in this tree's sample).
    pub fn leaf_of(&self) -> &[u32] {
        &self.leaf_of
    }

    /// Number of leaves.
    pub fn n_leaves(&self) -> usize {
        self.begin.len()
    }

    /// Splits `leaf`: rows whose bin in `column` is ≤ `threshold_bin` stay in `leaf`, the
    /// others move to a new leaf, whose id is returned. Both keep increasing order.
    pub fn split(&mut self, leaf: usize, column: &[u8], threshold_bin: u8) -> usize {
        let new_leaf = self.begin.len();
        let begin = self.begin[leaf];
        let end = begin + self.count[leaf];
        let n_left = split_stable(&mut self.indices[begin..end], &mut self.scratch, |r| {
            column[r as usize] <= threshold_bin
        });
        let write = begin + n_left;
        for &r in &self.indices[write..end] {
            self.leaf_of[r as usize] = new_leaf as u32;
        }
        self.count[leaf] = write - begin;
        self.begin.push(write);
        self.count.push(end - write);
        new_leaf
    }
}

/// Reorders `items` stably: those for which `goes_left` holds first, then the others;
/// returns how many went left. Every item is written to both sides and only its own side's
/// cursor moves on, so nothing branches on the data (about every other item would
/// mispredict). Writing left at `n_left ≤ read` never overwrites an item not yet read.
/// `scratch` holds the right side on the way (its contents are replaced).
pub fn split_stable(
    items: &mut [u32],
    scratch: &mut Vec<u32>,
    goes_left: impl Fn(u32) -> bool,
) -> usize {
    scratch.clear();
    scratch.resize(items.len(), 0);
    let (mut n_left, mut n_right) = (0, 0);
    for read in 0..items.len() {
        let item = items[read];
        let left = usize::from(goes_left(item));
        items[n_left] = item;
        scratch[n_right] = item;
        n_left += left;
        n_right += 1 - left;
    }
    items[n_left..].copy_from_slice(&scratch[..n_right]);
    n_left
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn split_moves_high_bins_to_a_new_leaf_keeping_order() {
        let mut p = DataPartition::default();
        p.reset(6, None);
        let column = [0u8, 3, 1, 2, 0, 5];
        let right = p.split(0, &column, 1);
        assert_eq!(p.rows(0), &[0, 2, 4]);
        assert_eq!(p.rows(right), &[1, 3, 5]);
        assert_eq!(p.leaf_of(), &[0, 1, 0, 1, 0, 1]);
    }
}
