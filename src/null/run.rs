//! Seeded, parallel null-model tests (docs/methods.md §7): [`run_test`] evaluates
//! any statistics on many draws of any sampler and keeps the values in draw
//! order; [`run_null`] is its convenience layer for the built-in model and
//! index names.

use std::fmt;
use std::str::FromStr;

use rand::distr::Distribution;
use rayon::prelude::*;

use crate::error::{Error, Result};
use crate::index::{IndexKind, IndexOptions};
use crate::metrics::{Direction, Order, Statistic};
use crate::null::{draw_rng, NullModel, NullOptions, NullSampler};
use crate::significance::{as_extreme, stopping_point, summarize, NullSummary};
use crate::storage::{NetView, Network, Weight};

/// Draws evaluated together between progress reports and stop checks. A
/// constant (not a function of the thread count) so that a sequential stop
/// ends after the same draws on any machine.
pub(crate) const BATCH: usize = 64;

/// One part of a run split for a cluster: shard `index` of `count`
/// (1-based) takes the draws `k` (0-based) with `k % count == index - 1`.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash)]
pub struct Shard {
    index: usize,
    count: usize,
}

impl Shard {
    /// Shard `index` of `count`; errors unless `1 <= index <= count`.
    pub fn new(index: usize, count: usize) -> Result<Self> {
        if count == 0 || index == 0 || index > count {
            return Err(Error::InvalidArgument(format!(
                "shard {index}/{count}: the shard must be I/K with 1 <= I <= K"
            )));
        }
        Ok(Shard { index, count })
    }
    /// The 1-based shard number `I`.
    pub fn index(self) -> usize {
        self.index
    }
    /// The number of shards `K`.
    pub fn count(self) -> usize {
        self.count
    }
    /// Does draw `k` belong to this shard?
    pub fn contains(self, k: u64) -> bool {
        k % self.count as u64 == (self.index - 1) as u64
    }
}

impl fmt::Display for Shard {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        write!(f, "{}/{}", self.index, self.count)
    }
}

impl FromStr for Shard {
    type Err = Error;
    fn from_str(s: &str) -> Result<Self> {
        let bad = || Error::InvalidArgument(format!("bad shard '{s}': expected I/K, e.g. 3/10"));
        let (i, k) = s.split_once('/').ok_or_else(bad)?;
        let i = i.trim().parse().map_err(|_| bad())?;
        let k = k.trim().parse().map_err(|_| bad())?;
        Shard::new(i, k)
    }
}

#[cfg(feature = "serde")]
impl serde::Serialize for Shard {
    fn serialize<S: serde::Serializer>(&self, s: S) -> std::result::Result<S::Ok, S::Error> {
        s.collect_str(self)
    }
}

/// How to run a test of any statistics against any sampler: the number of
/// draws, the seed and how the work is spread.
#[derive(Clone, Debug, PartialEq, Eq)]
#[non_exhaustive]
pub struct RunOptions {
    /// Number of draws `R` (at least 2).
    pub draws: usize,
    /// The run's seed; draw `k` uses [`crate::null::draw_rng`]`(seed, k)`.
    pub seed: u64,
    /// Worker threads; `None` runs in the current rayon pool. Results do not
    /// depend on it.
    pub threads: Option<usize>,
    /// Compute only this shard's draws (the summary needs all shards merged).
    pub shard: Option<Shard>,
    /// Sequential stop of Besag & Clifford after `H` extreme draws (at least
    /// 2); not combinable with a shard.
    pub stop_after: Option<usize>,
}

impl RunOptions {
    /// `draws` draws from `seed`, no shard, no stop, the current pool.
    pub fn new(draws: usize, seed: u64) -> Self {
        RunOptions {
            draws,
            seed,
            threads: None,
            shard: None,
            stop_after: None,
        }
    }

    fn check(&self) -> Result<()> {
        if self.draws < 2 {
            return Err(Error::InvalidArgument(format!(
                "a null-model test needs at least 2 draws, got {}",
                self.draws
            )));
        }
        if let Some(h) = self.stop_after {
            if h < 2 {
                return Err(Error::InvalidArgument(format!(
                    "the sequential stop needs H >= 2 extreme draws, got {h}"
                )));
            }
            if self.shard.is_some() {
                return Err(Error::InvalidArgument(
                    "a sequential stop decides on the draws in order and cannot be split into shards"
                        .into(),
                ));
            }
        }
        if self.threads == Some(0) {
            return Err(Error::InvalidArgument("threads must be at least 1".into()));
        }
        Ok(())
    }
}

/// What to run: one model, the indices to test, how many draws and how.
/// Build it with [`NullConfig::new`] and set fields (new settings may be
/// added).
#[derive(Clone, Debug)]
#[non_exhaustive]
pub struct NullConfig {
    /// The null model.
    pub model: NullModel,
    /// Indices evaluated on the observed network and on every draw.
    pub indices: Vec<IndexKind>,
    /// Number of draws `R` (at least 2).
    pub draws: usize,
    /// The run's seed; draw `k` uses [`crate::null::draw_rng`]`(seed, k)`.
    pub seed: u64,
    /// Worker threads; `None` runs in the current rayon pool. Results do not
    /// depend on it.
    pub threads: Option<usize>,
    /// Compute only this shard's draws (the summary needs all shards merged).
    pub shard: Option<Shard>,
    /// Sequential stop of Besag & Clifford after `H` extreme draws (at least
    /// 2); not combinable with a shard.
    pub stop_after: Option<usize>,
    /// Model options (curveball burn-in).
    pub options: NullOptions,
    /// Row and column order for the indices that read one.
    pub order: Order,
    /// Random starts of the packing search of `temperature` besides the
    /// degree-sorted one (default 4, as [`crate::metrics::temperature::TemperatureOptions`]).
    pub restarts: usize,
}

impl NullConfig {
    /// A configuration with the defaults: no shard, no stop, current pool,
    /// default burn-in, sorted order.
    pub fn new(model: NullModel, indices: Vec<IndexKind>, draws: usize, seed: u64) -> Self {
        NullConfig {
            model,
            indices,
            draws,
            seed,
            threads: None,
            shard: None,
            stop_after: None,
            options: NullOptions::default(),
            order: Order::Sorted,
            restarts: crate::metrics::temperature::TemperatureOptions::default().restarts,
        }
    }

    /// The index settings of this run: the order, and the packing restarts
    /// of `temperature`.
    fn index_options(&self) -> IndexOptions {
        let mut opts = IndexOptions::with_order(self.order);
        opts.temperature = opts.temperature.with_restarts(self.restarts);
        opts
    }

    /// The restarts recorded with the run: the setting when the packed
    /// `temperature` is among the indices, else `None` (it does not apply).
    pub fn recorded_restarts(&self) -> Option<usize> {
        packs_temperature(&self.indices).then_some(self.restarts)
    }

    /// The runner's part of the configuration.
    pub fn run_options(&self) -> RunOptions {
        RunOptions {
            draws: self.draws,
            seed: self.seed,
            threads: self.threads,
            shard: self.shard,
            stop_after: self.stop_after,
        }
    }

    /// Checks the settings without running anything (the runner checks them
    /// too): at least one index and two draws, a sequential stop `H >= 2`
    /// and not with a shard, at least one thread, and no index that reads
    /// weights under a model that draws binary matrices.
    pub fn check(&self) -> Result<()> {
        if self.indices.is_empty() {
            return Err(Error::InvalidArgument("no index to test".into()));
        }
        self.run_options().check()?;
        if !self.model.is_weighted() {
            if let Some(k) = self.indices.iter().find(|k| k.needs_weights()) {
                return Err(Error::WeightsUnderBinaryModel {
                    index: k.name(),
                    model: self.model.name(),
                });
            }
        }
        Ok(())
    }
}

/// True when the packed `temperature` (the index that reads the packing
/// restarts) is among `indices`.
pub fn packs_temperature(indices: &[IndexKind]) -> bool {
    indices.iter().any(|k| k.name() == "temperature")
}

/// The draws of a run (or of one shard of it) and everything needed to
/// summarise or merge them.
#[derive(Clone, Debug)]
#[cfg_attr(feature = "serde", derive(serde::Serialize))]
pub struct NullRun {
    /// The model.
    pub model: NullModel,
    /// The indices, in the order of the values of each draw.
    pub indices: Vec<IndexKind>,
    /// Observed value of each index.
    pub observed: Vec<f64>,
    /// The seed.
    pub seed: u64,
    /// Draws requested (`R`, all shards together).
    pub draws: usize,
    /// The shard these draws belong to, if split.
    pub shard: Option<Shard>,
    /// The sequential-stop limit `H`, if any.
    pub stop_after: Option<usize>,
    /// Curveball trades per draw (`fixed-both` only).
    pub burn_in: Option<usize>,
    /// Order used by order-dependent indices.
    pub order: Order,
    /// Random starts of the packing search of `temperature` (`None` when
    /// the packed `temperature` is not among the indices).
    pub restarts: Option<usize>,
    /// Rows, columns and links of the observed network.
    pub shape: (usize, usize, usize),
    /// Content fingerprint of the observed network
    /// ([`crate::null::draws_file::fingerprint`]): parts of one run are
    /// matched by it, not by how the file's name was spelled.
    pub network: u64,
    /// Indices `k` of the draws computed, ascending.
    pub draw_ids: Vec<u64>,
    /// `values[t][i]`: index `i` on draw `draw_ids[t]`.
    pub values: Vec<Vec<f64>>,
}

impl NullRun {
    /// True when the run holds every draw it needs: no shard, and draws
    /// `0..R`, or, with a sequential stop, draws `0..t` among which every
    /// index has reached its stop.
    pub fn is_complete(&self) -> bool {
        let directions: Vec<Direction> = self.indices.iter().map(|k| k.more_nested()).collect();
        complete(
            self.shard,
            self.draws,
            &self.draw_ids,
            self.stop_after,
            &self.observed,
            &directions,
            |i| self.values_of(i),
        )
    }

    /// The null values of index number `i`, in draw order.
    pub fn values_of(&self, i: usize) -> Vec<f64> {
        self.values.iter().map(|v| v[i]).collect()
    }

    /// One summary per index, in the order of [`NullRun::indices`]. Errors
    /// for a shard or an incomplete run (merge the shards first).
    pub fn summaries(&self) -> Result<Vec<NullSummary>> {
        if !self.is_complete() {
            return Err(incomplete(self.draw_ids.len(), self.draws, self.shard));
        }
        self.indices
            .iter()
            .enumerate()
            .map(|(i, k)| {
                summarize(
                    self.observed[i],
                    &self.values_of(i),
                    k.more_nested(),
                    self.stop_after,
                )
            })
            .collect()
    }
}

fn incomplete(have: usize, draws: usize, shard: Option<Shard>) -> Error {
    Error::IncompleteRun {
        held: have,
        draws,
        shard: shard.map(|s| (s.index(), s.count())),
    }
}

/// True when draws `0..R` are all there (or, with a sequential stop, draws
/// `0..t` by which every statistic has reached its stop), unsharded.
fn complete(
    shard: Option<Shard>,
    draws: usize,
    draw_ids: &[u64],
    stop_after: Option<usize>,
    observed: &[f64],
    directions: &[Direction],
    values_of: impl Fn(usize) -> Vec<f64>,
) -> bool {
    if shard.is_some()
        || draw_ids.len() > draws
        || draw_ids.iter().enumerate().any(|(t, &k)| k != t as u64)
    {
        return false;
    }
    if draw_ids.len() == draws {
        return true;
    }
    // Fewer draws than requested: only a sequential stop that every
    // statistic has reached explains it.
    stop_after.is_some_and(|h| {
        directions
            .iter()
            .enumerate()
            .all(|(i, &d)| stopping_point(observed[i], &values_of(i), d, h).is_some())
    })
}

/// The draws of a test of any statistics against any sampler (see
/// [`run_test`]), in draw order.
#[derive(Clone, Debug)]
#[cfg_attr(feature = "serde", derive(serde::Serialize))]
pub struct TestRun {
    /// The statistics' names, in the order of the values of each draw.
    pub names: Vec<String>,
    /// Each statistic's "more nested" direction.
    pub directions: Vec<Direction>,
    /// Observed value of each statistic.
    pub observed: Vec<f64>,
    /// The options the run was made with.
    #[cfg_attr(feature = "serde", serde(skip))]
    pub options: RunOptions,
    /// Indices `k` of the draws computed, ascending.
    pub draw_ids: Vec<u64>,
    /// `values[t][i]`: statistic `i` on draw `draw_ids[t]`.
    pub values: Vec<Vec<f64>>,
}

impl TestRun {
    /// The null values of statistic number `i`, in draw order.
    pub fn values_of(&self, i: usize) -> Vec<f64> {
        self.values.iter().map(|v| v[i]).collect()
    }

    /// True when the run holds every draw it needs (see
    /// [`NullRun::is_complete`]).
    pub fn is_complete(&self) -> bool {
        complete(
            self.options.shard,
            self.options.draws,
            &self.draw_ids,
            self.options.stop_after,
            &self.observed,
            &self.directions,
            |i| self.values_of(i),
        )
    }

    /// One summary per statistic (observed, mean, sd, z, one-sided
    /// p-values, quantiles). Errors for a shard or an incomplete run.
    pub fn summaries(&self) -> Result<Vec<NullSummary>> {
        if !self.is_complete() {
            return Err(incomplete(
                self.draw_ids.len(),
                self.options.draws,
                self.options.shard,
            ));
        }
        (0..self.names.len())
            .map(|i| {
                summarize(
                    self.observed[i],
                    &self.values_of(i),
                    self.directions[i],
                    self.options.stop_after,
                )
            })
            .collect()
    }
}

/// Tests any statistics against any sampler: see [`run_test_with_progress`].
///
/// # Example
/// ```
/// use ndarray::array;
/// use nidus::metrics::registry::{lookup, IndexOptions};
/// use nidus::null::{run_test, Equiprobable, RunOptions};
/// use nidus::{Network, Statistic};
/// let net = Network::from_array(array![
///     [1, 1, 1, 1, 1], [1, 1, 1, 1, 0], [1, 1, 1, 0, 0], [1, 1, 0, 0, 0], [1, 0, 0, 0, 0]
/// ]).unwrap();
/// let nodf = lookup("nodf").unwrap().with(IndexOptions::default());
/// let sampler = Equiprobable::new(&net).unwrap();
/// let run = run_test(&net, &[&nodf], &sampler, &RunOptions::new(99, 1)).unwrap();
/// let s = &run.summaries().unwrap()[0];
/// assert_eq!(s.observed, 100.0);
/// assert!(s.p_greater < 0.05);
/// ```
pub fn run_test<D, M>(
    observed: &dyn NetView,
    statistics: &[&dyn Statistic],
    sampler: &D,
    options: &RunOptions,
) -> Result<TestRun>
where
    D: Distribution<M> + Sync,
    M: NetView,
{
    run_test_with_progress(observed, statistics, sampler, options, &|_| {})
}

/// Tests any statistics against any sampler, calling `progress(done)` after
/// each batch of draws with the number of this run's draws done so far.
///
/// Every statistic is evaluated on `observed` and on every draw. Draw `k`
/// is `sampler.sample(&mut `[`draw_rng`]`(seed, k))`; draws are computed in
/// parallel in batches of 64 draws in draw order and stored in draw order,
/// so the values (and the summaries) are identical for any thread count,
/// and the draws of shards `1/K..K/K` together are exactly the draws of the
/// unsplit run. With a sequential stop the run ends after the first batch
/// by which every statistic has its `H` extreme draws.
///
/// A sampler is any `rand::distr::Distribution` of a [`NetView`]: the
/// built-in models, a [`crate::null::BurnIn`] chain, or a user's own.
///
/// Cost: `R` draws plus `R` evaluations of each statistic; memory `O(R x
/// statistics)` values plus one matrix per thread.
///
/// Errors: bad options (fewer than 2 draws, a stop with shards, no
/// statistic, ...), or a statistic that fails on the observed view or on a
/// draw (the first failing draw in draw order).
pub fn run_test_with_progress<D, M>(
    observed: &dyn NetView,
    statistics: &[&dyn Statistic],
    sampler: &D,
    options: &RunOptions,
    progress: &(dyn Fn(usize) + Sync),
) -> Result<TestRun>
where
    D: Distribution<M> + Sync,
    M: NetView,
{
    if statistics.is_empty() {
        return Err(Error::InvalidArgument("no statistic to test".into()));
    }
    options.check()?;
    let go = || test_inner(observed, statistics, sampler, options, progress);
    match options.threads {
        Some(t) => rayon::ThreadPoolBuilder::new()
            .num_threads(t)
            .build()
            .map_err(|e| Error::InvalidArgument(format!("cannot start {t} threads: {e}")))?
            .install(go),
        None => go(),
    }
}

fn test_inner<D, M>(
    observed_view: &dyn NetView,
    statistics: &[&dyn Statistic],
    sampler: &D,
    options: &RunOptions,
    progress: &(dyn Fn(usize) + Sync),
) -> Result<TestRun>
where
    D: Distribution<M> + Sync,
    M: NetView,
{
    let mut draw_ids = Vec::new();
    let mut values = Vec::new();
    let (observed, directions) = test_stream(
        observed_view,
        statistics,
        sampler,
        options,
        0,
        progress,
        &mut |_, k, v| {
            draw_ids.push(k);
            values.push(v.to_vec());
            Ok(true)
        },
    )?;
    Ok(TestRun {
        names: statistics.iter().map(|s| s.name().to_string()).collect(),
        directions,
        observed,
        options: options.clone(),
        draw_ids,
        values,
    })
}

/// The receiver of a streamed test's draws, `(observed, k, values)`, in
/// draw order; returns false to stop.
type StreamSink<'a> = dyn FnMut(&[f64], u64, &[f64]) -> Result<bool> + Send + 'a;

/// The draws of a test handed one by one to `sink` in draw order, from the
/// first of the run's draws numbered `start` or above; no list of draw
/// numbers and no stored draws. Returns the observed values and directions.
fn test_stream<D, M>(
    observed_view: &dyn NetView,
    statistics: &[&dyn Statistic],
    sampler: &D,
    options: &RunOptions,
    start: u64,
    progress: &(dyn Fn(usize) + Sync),
    sink: &mut StreamSink<'_>,
) -> Result<(Vec<f64>, Vec<Direction>)>
where
    D: Distribution<M> + Sync,
    M: NetView,
{
    let observed: Vec<f64> = statistics
        .iter()
        .map(|s| s.evaluate(observed_view))
        .collect::<Result<_>>()?;
    let directions: Vec<Direction> = statistics.iter().map(|s| s.more_nested()).collect();
    let eval = |k: u64| -> Result<Vec<f64>> {
        let draw: M = sampler.sample(&mut draw_rng(options.seed, k));
        statistics.iter().map(|s| s.evaluate(&draw)).collect()
    };
    if start > 0 && options.stop_after.is_some() {
        return Err(Error::InvalidArgument(
            "a run with a sequential stop cannot be resumed; run it again".into(),
        ));
    }
    // This run's draw numbers, in order, without a list of them.
    let (first, step) = match options.shard {
        Some(s) => ((s.index() - 1) as u64, s.count() as u64),
        None => (0, 1),
    };
    let first = if start > first {
        first + (start - first).div_ceil(step) * step
    } else {
        first
    };
    let mut ids = (first..options.draws as u64).step_by(step as usize);
    let mut done = 0usize;
    let mut hits = vec![0usize; statistics.len()];
    let mut batch: Vec<u64> = Vec::with_capacity(BATCH);
    loop {
        batch.clear();
        batch.extend(ids.by_ref().take(BATCH));
        if batch.is_empty() {
            break;
        }
        let got: Vec<Result<Vec<f64>>> = batch.par_iter().map(|&k| eval(k)).collect();
        for (&k, v) in batch.iter().zip(got) {
            let v = v?;
            for (i, &d) in directions.iter().enumerate() {
                if as_extreme(v[i], observed[i], d) {
                    hits[i] += 1;
                }
            }
            done += 1;
            if !sink(&observed, k, &v)? {
                return Ok((observed, directions));
            }
        }
        progress(done);
        if let Some(h) = options.stop_after {
            if hits.iter().all(|&c| c >= h) {
                break;
            }
        }
    }
    Ok((observed, directions))
}

/// Runs a null-model test: see [`run_null_with_progress`].
///
/// # Example
/// ```
/// use ndarray::array;
/// use nidus::{index::IndexKind, null::{run_null, NullConfig, NullModel}, Network};
/// let net = Network::from_array(array![
///     [1, 1, 1, 1, 1], [1, 1, 1, 1, 0], [1, 1, 1, 0, 0], [1, 1, 0, 0, 0], [1, 0, 0, 0, 0]
/// ]).unwrap();
/// let config = NullConfig::new(NullModel::Equiprobable, vec![IndexKind::named("nodf").unwrap()], 99, 1);
/// let run = run_null(&net, &config).unwrap();
/// let s = &run.summaries().unwrap()[0];
/// assert_eq!(s.observed, 100.0);
/// assert!(s.p_greater < 0.05); // a staircase is more nested than random fills
/// ```
pub fn run_null<T: Weight>(net: &Network<T>, config: &NullConfig) -> Result<NullRun> {
    run_null_with_progress(net, config, &|_| {})
}

/// Runs a null-model test, calling `progress(done)` after each batch of
/// draws with the number of this run's draws done so far.
///
/// Draw `k` is made with [`crate::null::draw_rng`]`(seed, k)` and every
/// index is evaluated on it; draws are computed in parallel in batches of
/// 64 draws in draw order and stored in draw order, so the values (and the
/// summaries) are identical for any thread count, and the draws of shards
/// `1/K..K/K` together are exactly the draws of the unsplit run. With a
/// sequential stop the run ends after the first batch by which every index
/// has its `H` extreme draws; [`NullRun::summaries`] applies the rule in
/// draw order.
///
/// The convenience layer over [`run_test`] for the built-in names: the
/// model's sampler ([`NullSampler`]) and the indices' statistics. Binary
/// models are tested on the binary view of the observed network; weighted
/// models on the network and on each drawn table.
///
/// Cost: `R` draws plus `R` evaluations of each index; memory `O(R x
/// indices)` values plus one matrix per thread.
///
/// Errors: bad configuration (fewer than 2 draws, a weighted index with a
/// binary model, a stop with shards, ...), a model that does not fit the
/// network, or an index that fails on the observed network or on a draw
/// (the first failing draw in draw order).
pub fn run_null_with_progress<T: Weight>(
    net: &Network<T>,
    config: &NullConfig,
    progress: &(dyn Fn(usize) + Sync),
) -> Result<NullRun> {
    config.check()?;
    match config.threads {
        Some(t) => rayon::ThreadPoolBuilder::new()
            .num_threads(t)
            .build()
            .map_err(|e| Error::InvalidArgument(format!("cannot start {t} threads: {e}")))?
            .install(|| run_inner(net, config, progress)),
        None => run_inner(net, config, progress),
    }
}

fn run_inner<T: Weight>(
    net: &Network<T>,
    config: &NullConfig,
    progress: &(dyn Fn(usize) + Sync),
) -> Result<NullRun> {
    let sampler = NullSampler::new(net, config.model, &config.options)?;
    let opts = config.index_options();
    let stats: Vec<_> = config.indices.iter().map(|k| k.statistic(opts)).collect();
    let stats: Vec<&dyn Statistic> = stats.iter().map(|s| s as &dyn Statistic).collect();
    let options = config.run_options();
    // Binary models are tested on the binary view of the observed network.
    let run = if config.model.is_weighted() {
        test_inner(net, &stats, &sampler, &options, progress)?
    } else if sampler.draws_lists() {
        // As lists too: a bit table of a huge network is refused.
        let b = crate::null::lists::binary_lists(net);
        test_inner(&b, &stats, &sampler, &options, progress)?
    } else {
        let b = net.binary()?;
        test_inner(&b, &stats, &sampler, &options, progress)?
    };
    Ok(NullRun {
        model: config.model,
        indices: config.indices.clone(),
        observed: run.observed,
        seed: config.seed,
        draws: config.draws,
        shard: config.shard,
        stop_after: config.stop_after,
        burn_in: sampler.burn_in(),
        order: config.order,
        restarts: config.recorded_restarts(),
        shape: (net.nrows(), net.ncols(), net.links()),
        network: crate::null::draws_file::fingerprint(net),
        draw_ids: run.draw_ids,
        values: run.values,
    })
}

/// The receiver of a streamed run's draws: `(run without draws, k, values)`,
/// returning false to stop.
pub type DrawSink<'a> = dyn FnMut(&NullRun, u64, &[f64]) -> Result<bool> + Send + 'a;

/// Runs a null-model test like [`run_null_with_progress`] but hands each
/// draw to `sink(head, k, values)` in draw order instead of keeping it
/// (`head` is the run without draws, with its observed values); `sink`
/// returns false to stop the run early (an interrupted run: the draws
/// handed so far are exactly draws `k` of the run, in order). Draws
/// numbered below `start` are skipped (a resumed run: they were saved
/// before; not with a sequential stop, whose count would miss them).
/// Returns the run without draws. Memory: one batch of draws, not `O(R)`.
///
/// # Example
/// ```
/// use ndarray::array;
/// use nidus::{index::IndexKind, null::*, Network};
/// let net = Network::from_array(array![[1, 1, 0], [1, 0, 1], [0, 1, 0]]).unwrap();
/// let nodf = IndexKind::named("nodf").unwrap();
/// let config = NullConfig::new(NullModel::FixedRows, vec![nodf], 20, 5);
/// let whole = run_null(&net, &config).unwrap();
/// let mut got = Vec::new();
/// run_null_streaming(&net, &config, 12, &|_| {}, &mut |_, k, v| {
///     got.push((k, v[0]));
///     Ok(true)
/// })
/// .unwrap();
/// assert_eq!(got[0], (12, whole.values[12][0]));
/// assert_eq!(got.len(), 8);
/// ```
pub fn run_null_streaming<T: Weight>(
    net: &Network<T>,
    config: &NullConfig,
    start: u64,
    progress: &(dyn Fn(usize) + Sync),
    sink: &mut DrawSink<'_>,
) -> Result<NullRun> {
    config.check()?;
    let mut go = || -> Result<NullRun> {
        let sampler = NullSampler::new(net, config.model, &config.options)?;
        let opts = config.index_options();
        let stats: Vec<_> = config.indices.iter().map(|k| k.statistic(opts)).collect();
        let stats: Vec<&dyn Statistic> = stats.iter().map(|s| s as &dyn Statistic).collect();
        let options = config.run_options();
        let network = crate::null::draws_file::fingerprint(net);
        let make_head = |observed: &[f64]| NullRun {
            model: config.model,
            indices: config.indices.clone(),
            observed: observed.to_vec(),
            seed: config.seed,
            draws: config.draws,
            shard: config.shard,
            stop_after: config.stop_after,
            burn_in: sampler.burn_in(),
            order: config.order,
            restarts: config.recorded_restarts(),
            shape: (net.nrows(), net.ncols(), net.links()),
            network,
            draw_ids: Vec::new(),
            values: Vec::new(),
        };
        let mut head: Option<NullRun> = None;
        let mut inner = |observed: &[f64], k: u64, v: &[f64]| -> Result<bool> {
            let h = head.get_or_insert_with(|| make_head(observed));
            sink(h, k, v)
        };
        let (observed, _) = if config.model.is_weighted() {
            test_stream(net, &stats, &sampler, &options, start, progress, &mut inner)?
        } else if sampler.draws_lists() {
            let b = crate::null::lists::binary_lists(net);
            test_stream(&b, &stats, &sampler, &options, start, progress, &mut inner)?
        } else {
            let b = net.binary()?;
            test_stream(&b, &stats, &sampler, &options, start, progress, &mut inner)?
        };
        Ok(head.unwrap_or_else(|| make_head(&observed)))
    };
    match config.threads {
        Some(t) => rayon::ThreadPoolBuilder::new()
            .num_threads(t)
            .build()
            .map_err(|e| Error::InvalidArgument(format!("cannot start {t} threads: {e}")))?
            .install(go),
        None => go(),
    }
}
