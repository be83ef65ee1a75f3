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
        self.scratch.clear();
        self.scratch.resize(end - begin, 0);
        // Every row is written to both sides and only its own side's cursor moves on, so
        // nothing branches on the data (about every other row would mispredict). Writing
        // left at `write ≤ read` never overwrites a row not yet read.
        let (mut write, mut n_right) = (begin, 0);
        for read in begin..end {
            let r = self.indices[read];
            let left = usize::from(column[r as usize] <= threshold_bin);
            self.indices[write] = r;
            self.scratch[n_right] = r;
            write += left;
            n_right += 1 - left;
        }
        self.scratch.truncate(n_right);
        for &r in &self.scratch {
            self.leaf_of[r as usize] = new_leaf as u32;
        }
        self.indices[write..end].copy_from_slice(&self.scratch);
        self.count[leaf] = write - begin;
        self.begin.push(write);
        self.count.push(end - write);
        new_leaf
    }
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
