//! Results cached by the content of their inputs.
//!
//! The key of a well's analysis is a hash of everything the result depends on: the
//! well's surfaces, the parameters of the lithologies it uses (not the whole
//! catalogue), the model parameters, the sea-level curve and the team's rift timing.
//! An edit therefore invalidates exactly what it touches, with no bookkeeping: a
//! changed well, or a lithology it uses, gives a new key; every other well keeps its
//! entry. Old entries are dropped when the cache is full (oldest first).

use sagline_science::WellColumn;
use sagline_science::analysis::{StudyInputs, WellAnalysis};
use std::collections::{HashMap, VecDeque};
use std::hash::{DefaultHasher, Hash, Hasher};
use std::sync::atomic::{AtomicU64, Ordering};
use std::sync::{Arc, Mutex};

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

/// An in-memory cache of well analyses keyed by content.
#[derive(Debug)]
pub struct AnalysisCache {
    capacity: usize,
    inner: Mutex<Entries>,
    hits: AtomicU64,
    misses: AtomicU64,
    backstrips: AtomicU64,
    interpretations: AtomicU64,
}

#[derive(Debug, Default)]
struct Entries {
    map: HashMap<ContentKey, Arc<WellAnalysis>>,
    order: VecDeque<ContentKey>,
}

impl AnalysisCache {
    /// A cache holding at most `capacity` well analyses.
    pub fn new(capacity: usize) -> Self {
        AnalysisCache {
            capacity: capacity.max(1),
            inner: Mutex::new(Entries::default()),
            hits: AtomicU64::new(0),
            misses: AtomicU64::new(0),
            backstrips: AtomicU64::new(0),
            interpretations: AtomicU64::new(0),
        }
    }

    /// The cached analysis for `key`, counting a hit or a miss.
    pub fn get(&self, key: ContentKey) -> Option<Arc<WellAnalysis>> {
        let found = self
            .inner
            .lock()
            .expect("cache lock")
            .map
            .get(&key)
            .cloned();
        let counter = if found.is_some() {
            &self.hits
        } else {
            &self.misses
        };
        counter.fetch_add(1, Ordering::Relaxed);
        found
    }

    pub fn insert(&self, key: ContentKey, analysis: Arc<WellAnalysis>) {
        let mut e = self.inner.lock().expect("cache lock");
        if e.map.insert(key, analysis).is_none() {
            e.order.push_back(key);
        }
        while e.map.len() > self.capacity {
            match e.order.pop_front() {
                Some(old) => {
                    e.map.remove(&old);
                }
                None => break,
            }
        }
    }

    /// Count work done for misses: `backstrips` columns restored, `interpretations` fits made.
    pub fn count_work(&self, backstrips: u64, interpretations: u64) {
        self.backstrips.fetch_add(backstrips, Ordering::Relaxed);
        self.interpretations
            .fetch_add(interpretations, Ordering::Relaxed);
    }

    pub fn stats(&self) -> CacheStats {
        CacheStats {
            hits: self.hits.load(Ordering::Relaxed),
            misses: self.misses.load(Ordering::Relaxed),
            entries: self.inner.lock().expect("cache lock").map.len(),
            backstrips: self.backstrips.load(Ordering::Relaxed),
            interpretations: self.interpretations.load(Ordering::Relaxed),
        }
    }
}

impl Default for AnalysisCache {
    /// Room for a few large studies.
    fn default() -> Self {
        AnalysisCache::new(20_000)
    }
}
