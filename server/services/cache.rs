//! Results cached by the content of their inputs.
//!
//! The key of a well's analysis is a hash of everything the result depends on: the
//! well's surfaces, the parameters of the lithologies it uses (not the whole
//! catalogue), the model parameters, the sea-level curve, the thermal settings and the
//! team's rift timing.
//! An edit therefore invalidates exactly what it touches, with no bookkeeping: a
//! changed well, or a lithology it uses, gives a new key; every other well keeps its
//! entry. The cache is bounded by the size of what it holds (least recently used
//! dropped first), and concurrent misses of one key compute once (moka).

use sagline_science::WellColumn;
use sagline_science::analysis::{StudyInputs, WellAnalysis};
use std::hash::{DefaultHasher, Hash, Hasher};
use std::sync::Arc;
use std::sync::atomic::{AtomicU64, Ordering};

/// The content key of one well's analysis.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash)]
pub struct ContentKey(u64);

/// Hash the inputs of one well's analysis. Floats are hashed by their bits, so any
/// change of value (even in the last digit) makes a new key.
pub fn content_key(
    well: &WellColumn,
    inputs: &StudyInputs,
    timing: Option<&[(f64, f64)]>,
) -> ContentKey {
    let mut h = DefaultHasher::new();
    let bits = |h: &mut DefaultHasher, x: f64| x.to_bits().hash(h);
    well.name.hash(&mut h);
    for s in &well.surfaces {
        s.horizon.hash(&mut h);
        bits(&mut h, s.depth_m);
        bits(&mut h, s.age_ma);
        bits(&mut h, s.water_depth.min_m);
        bits(&mut h, s.water_depth.max_m);
        match &s.lithology_below {
            Some(mix) => {
                for part in &mix.parts {
                    part.lithology.to_ascii_lowercase().hash(&mut h);
                    bits(&mut h, part.fraction);
                    // The lithology's own parameters, so a catalogue edit reaches exactly its users.
                    match inputs.catalogue.get(&part.lithology) {
                        Some(l) => {
                            bits(&mut h, l.surface_porosity);
                            bits(&mut h, l.compaction_per_km);
                            bits(&mut h, l.grain_density_kg_m3);
                        }
                        None => "unknown".hash(&mut h),
                    }
                }
            }
            None => 0u8.hash(&mut h),
        }
        match s.erosion {
            Some(e) => {
                bits(&mut h, e.eroded_m);
                bits(&mut h, e.eroded_at_ma);
            }
            None => 0u8.hash(&mut h),
        }
    }
    for (_, v) in inputs.params.entries() {
        bits(&mut h, v);
    }
    for p in inputs.sea_level.points() {
        bits(&mut h, p.age_ma);
        bits(&mut h, p.sea_level_m);
    }
    // The thermal settings a study can change (the rest are the program's constants).
    for &(age, t) in inputs.thermal.settings.surface.points() {
        bits(&mut h, age);
        bits(&mut h, t);
    }
    bits(&mut h, inputs.thermal.crust.surface_production_w_m3);
    bits(&mut h, inputs.thermal.crust.decay_depth_m);
    inputs.thermal.settings.method.hash(&mut h);
    match timing {
        Some(t) => {
            for &(onset, end) in t {
                bits(&mut h, onset);
                bits(&mut h, end);
            }
        }
        None => "proposed".hash(&mut h),
    }
    ContentKey(h.finish())
}

/// Counters of the cache's use, for tests and the log.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default)]
pub struct CacheStats {
    pub hits: u64,
    pub misses: u64,
    pub entries: usize,
    /// Wells backstripped (each computed analysis backstrips its column once).
    pub backstrips: u64,
    /// Stretching-model interpretations computed (one per analysed timing).
    pub interpretations: u64,
}

/// An in-memory cache of computed values keyed by content, bounded by the total
/// weight of its entries (least recently used dropped first). Concurrent misses of
/// one key compute once: the later callers wait for the first one's result.
pub struct ContentCache<V> {
    entries: moka::sync::Cache<ContentKey, Arc<V>>,
    hits: AtomicU64,
    misses: AtomicU64,
    backstrips: AtomicU64,
    interpretations: AtomicU64,
}

impl<V> std::fmt::Debug for ContentCache<V> {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        f.debug_struct("ContentCache")
            .field("entries", &self.entries.entry_count())
            .finish()
    }
}

impl<V: Send + Sync + 'static> ContentCache<V> {
    /// A cache holding entries of total weight at most `capacity`; `weight` weighs
    /// one entry (at least 1).
    pub fn new(capacity: u64, weight: fn(&V) -> u32) -> Self {
        ContentCache {
            entries: moka::sync::Cache::builder()
                .max_capacity(capacity.max(1))
                .weigher(move |_, v: &Arc<V>| weight(v).max(1))
                .eviction_policy(moka::policy::EvictionPolicy::lru())
                .build(),
            hits: AtomicU64::new(0),
            misses: AtomicU64::new(0),
            backstrips: AtomicU64::new(0),
            interpretations: AtomicU64::new(0),
        }
    }

    /// The value for `key`, computed by `compute` when the cache does not hold it
    /// (counted as a miss; a failed computation is not kept). A caller that misses
    /// while another computes the same key waits for that result (counted as a hit).
    /// `compute` must not call back into the cache.
    pub fn get_or_compute<E: Send + Sync + 'static>(
        &self,
        key: ContentKey,
        compute: impl FnOnce() -> Result<V, E>,
    ) -> Result<Arc<V>, Arc<E>> {
        let mut computed = false;
        let found = self.entries.try_get_with(key, || {
            computed = true;
            compute().map(Arc::new)
        });
        let counter = if computed { &self.misses } else { &self.hits };
        counter.fetch_add(1, Ordering::Relaxed);
        found
    }

    /// The value held for `key`, if any (a hit or a miss is counted).
    pub fn get(&self, key: ContentKey) -> Option<Arc<V>> {
        let found = self.entries.get(&key);
        let counter = if found.is_some() {
            &self.hits
        } else {
            &self.misses
        };
        counter.fetch_add(1, Ordering::Relaxed);
        found
    }

    /// Keep a value computed elsewhere (the well page computes two timings from one
    /// backstrip and stores both).
    pub fn insert(&self, key: ContentKey, value: Arc<V>) {
        self.entries.insert(key, value);
    }

    /// Count work done for misses: `backstrips` columns restored, `interpretations` fits made.
    pub fn count_work(&self, backstrips: u64, interpretations: u64) {
        self.backstrips.fetch_add(backstrips, Ordering::Relaxed);
        self.interpretations
            .fetch_add(interpretations, Ordering::Relaxed);
    }

    /// Counters, and the entries held once pending evictions have run.
    pub fn stats(&self) -> CacheStats {
        self.entries.run_pending_tasks();
        CacheStats {
            hits: self.hits.load(Ordering::Relaxed),
            misses: self.misses.load(Ordering::Relaxed),
            entries: self.entries.entry_count() as usize,
            backstrips: self.backstrips.load(Ordering::Relaxed),
            interpretations: self.interpretations.load(Ordering::Relaxed),
        }
    }

    /// The total weight held once pending evictions have run.
    pub fn weight(&self) -> u64 {
        self.entries.run_pending_tasks();
        self.entries.weighted_size()
    }
}

/// The cache of well analyses, weighed by the surfaces of their history.
pub type AnalysisCache = ContentCache<WellAnalysis>;

/// The weight of one well's analysis: its restored units over every step (the
/// history's size grows with their count, the square of the surfaces).
fn analysis_weight(a: &WellAnalysis) -> u32 {
    let units: usize = a.history.steps.iter().map(|s| s.units.len() + 1).sum();
    u32::try_from(units).unwrap_or(u32::MAX)
}

impl Default for ContentCache<WellAnalysis> {
    /// Room for a few large studies: 20,000 wells of 60 surfaces (about 1,800 restored
    /// units each).
    fn default() -> Self {
        ContentCache::new(20_000 * 1_830, analysis_weight)
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use std::sync::Barrier;
    use std::thread;
    use std::time::Duration;

    #[test]
    fn two_concurrent_misses_of_one_key_compute_once() {
        let cache: ContentCache<u64> = ContentCache::new(100, |_| 1);
        let computed = AtomicU64::new(0);
        let start = Barrier::new(2);
        let results: Vec<u64> = thread::scope(|s| {
            let calls: Vec<_> = (0..2)
                .map(|_| {
                    s.spawn(|| {
                        start.wait();
                        let v = cache
                            .get_or_compute(ContentKey(7), || {
                                computed.fetch_add(1, Ordering::SeqCst);
                                // Long enough for the other caller to miss meanwhile.
                                thread::sleep(Duration::from_millis(200));
                                Ok::<u64, String>(49)
                            })
                            .expect("computed");
                        *v
                    })
                })
                .collect();
            calls
                .into_iter()
                .map(|c| c.join().expect("caller"))
                .collect()
        });
        assert_eq!(results, [49, 49]);
        assert_eq!(computed.load(Ordering::SeqCst), 1);
        let stats = cache.stats();
        assert_eq!((stats.misses, stats.hits, stats.entries), (1, 1, 1));
    }

    #[test]
    fn the_total_weight_stays_within_the_bound() {
        let cache: ContentCache<u64> = ContentCache::new(50, |v| *v as u32);
        for k in 0..40u64 {
            cache
                .get_or_compute(ContentKey(k), || Ok::<u64, String>(10))
                .expect("computed");
        }
        assert!(cache.weight() <= 50, "{}", cache.weight());
        assert!(cache.stats().entries <= 5, "{:?}", cache.stats());
        // The most recent entry is held.
        let before = cache.stats().misses;
        cache
            .get_or_compute(ContentKey(39), || Ok::<u64, String>(10))
            .expect("held");
        assert_eq!(cache.stats().misses, before, "key 39 was still held");
    }

    #[test]
    fn a_failed_computation_is_not_kept() {
        let cache: ContentCache<u64> = ContentCache::new(10, |_| 1);
        let failed = cache.get_or_compute(ContentKey(1), || Err::<u64, _>("no".to_string()));
        assert_eq!(failed.unwrap_err().as_str(), "no");
        let again = cache.get_or_compute(ContentKey(1), || Ok::<u64, String>(3));
        assert_eq!(*again.expect("computed now"), 3);
        assert_eq!(cache.stats().misses, 2);
    }
}
