//! Shards: contiguous blocks of grid points, one per task of a job array.

/// Most shards a sweep may be split into.
pub const MAX_SHARDS: usize = 1_000_000;

/// Shard `index` of `count` (1-based, as `--shard I/N` is written).
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct ShardSpec {
    /// 1..=count.
    pub index: usize,
    /// Number of shards.
    pub count: usize,
}

impl ShardSpec {
    /// The whole sweep as one shard.
    pub const WHOLE: ShardSpec = ShardSpec { index: 1, count: 1 };

    /// Parse `I/N` (1 <= I <= N).
    pub fn parse(text: &str) -> Result<ShardSpec, String> {
        let form = format!(
            "--shard: expected I/N with 1 <= I <= N <= {MAX_SHARDS} (e.g. 3/10: the third of ten shards), got {text:?}"
        );
        let (i, n) = text.split_once('/').ok_or_else(|| form.clone())?;
        let (Ok(index), Ok(count)) = (i.trim().parse::<usize>(), n.trim().parse::<usize>()) else {
            return Err(form);
        };
        if count == 0 || count > MAX_SHARDS {
            return Err(format!(
                "--shard {text}: the shard count must be in [1, {MAX_SHARDS}], got {count}"
            ));
        }
        if index == 0 || index > count {
            return Err(format!(
                "--shard {text}: the shard index must be in [1, {count}] (shards are numbered from 1), got {index}"
            ));
        }
        Ok(ShardSpec { index, count })
    }

    /// The grid points of this shard out of `points`: a contiguous block, so
    /// shards 1..=N in order cover every point exactly once.
    pub fn range(self, points: usize) -> std::ops::Range<usize> {
        let at = |k: usize| ((k as u128 * points as u128) / self.count as u128) as usize;
        at(self.index - 1)..at(self.index)
    }

    /// File name stem of this shard's files, e.g. `shard-00002-of-00004`.
    pub fn stem(self) -> String {
        format!("shard-{:05}-of-{:05}", self.index, self.count)
    }
}

impl std::fmt::Display for ShardSpec {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        write!(f, "{}/{}", self.index, self.count)
    }
}
