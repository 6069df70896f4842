//! Mergeable error statistics for fleets: the simulator's quantile sketch
//! ([`clampwise_sim::quantile_sketch`], the DDSketch scheme behind `compare`'s P95/P99) and
//! `compare`'s error figures (count, bias, RMS, max |error|, P95, P99, and the same relative
//! to |reference| above a floor), each serialisable to bytes and mergeable. Statistics merged
//! from many devices equal those of one pass over all rows: counts, maxima and quantiles
//! exactly (the sketches' buckets add), sums up to the order of additions.
//!
//! Bytes (little-endian): a sketch is `CWQS`, version u16 = 1, bucket count u32, non-zero
//! buckets u32, then (index u32, count u64) for each non-zero bucket; error statistics are
//! `CWES`, version u16 = 1, floor f64, then the absolute and the relative moments, each n u64,
//! sum f64, sum of squares f64, max |x| f64, sketch length u32 and the sketch's bytes.

use clampwise_sim::compare::{self, Moments};
use clampwise_sim::quantile_sketch::{self, QuantileSketch as Sketch};
use numpy::PyReadonlyArray1;
use pyo3::prelude::*;
use pyo3::types::{PyBytes, PyDict};

use crate::errors;

const SKETCH_MAGIC: &[u8; 4] = b"CWQS";
const STATS_MAGIC: &[u8; 4] = b"CWES";
const VERSION: u16 = 1;

/// Little-endian reader over a byte slice; every read says what was cut short.
struct Reader<'a> {
    bytes: &'a [u8],
    at: usize,
}

impl<'a> Reader<'a> {
    fn take(&mut self, n: usize, what: &str) -> PyResult<&'a [u8]> {
        let end = self.at.checked_add(n).filter(|&e| e <= self.bytes.len());
        let Some(end) = end else {
            return Err(errors::usage(format!(
                "cannot decode: cut short at byte {} reading {what}",
                self.at
            )));
        };
        let s = self.bytes.get(self.at..end).unwrap_or_default();
        self.at = end;
        Ok(s)
    }
    fn array<const N: usize>(&mut self, what: &str) -> PyResult<[u8; N]> {
        let mut a = [0u8; N];
        a.copy_from_slice(self.take(N, what)?);
        Ok(a)
    }
    fn u16(&mut self, what: &str) -> PyResult<u16> {
        Ok(u16::from_le_bytes(self.array(what)?))
    }
    fn u32(&mut self, what: &str) -> PyResult<u32> {
        Ok(u32::from_le_bytes(self.array(what)?))
    }
    fn u64(&mut self, what: &str) -> PyResult<u64> {
        Ok(u64::from_le_bytes(self.array(what)?))
    }
    fn f64(&mut self, what: &str) -> PyResult<f64> {
        Ok(f64::from_le_bytes(self.array(what)?))
    }
    fn header(&mut self, magic: &[u8; 4], what: &str) -> PyResult<()> {
        if self.take(4, "the magic")? != magic {
            return Err(errors::usage(format!("cannot decode: not {what} bytes")));
        }
        let v = self.u16("the version")?;
        if v != VERSION {
            return Err(errors::usage(format!(
                "cannot decode: {what} version {v}, expected {VERSION}"
            )));
        }
        Ok(())
    }
    fn end(&self) -> PyResult<()> {
        if self.at == self.bytes.len() {
            Ok(())
        } else {
            Err(errors::usage(format!(
                "cannot decode: {} bytes left over",
                self.bytes.len() - self.at
            )))
        }
    }
}

fn len_u32(n: usize) -> u32 {
    u32::try_from(n).unwrap_or(u32::MAX)
}

fn sketch_bytes(s: &Sketch, out: &mut Vec<u8>) {
    let counts = s.bucket_counts();
    out.extend_from_slice(SKETCH_MAGIC);
    out.extend_from_slice(&VERSION.to_le_bytes());
    out.extend_from_slice(&len_u32(counts.len()).to_le_bytes());
    let used: Vec<(usize, u64)> = counts
        .iter()
        .copied()
        .enumerate()
        .filter(|&(_, c)| c > 0)
        .collect();
    out.extend_from_slice(&len_u32(used.len()).to_le_bytes());
    for (i, c) in used {
        out.extend_from_slice(&len_u32(i).to_le_bytes());
        out.extend_from_slice(&c.to_le_bytes());
    }
}

fn sketch_from(r: &mut Reader<'_>) -> PyResult<Sketch> {
    r.header(SKETCH_MAGIC, "quantile sketch")?;
    let buckets = r.u32("the bucket count")? as usize;
    let used = r.u32("the number of buckets used")?;
    let mut counts = vec![0u64; buckets];
    for _ in 0..used {
        let i = r.u32("a bucket index")? as usize;
        let c = r.u64("a bucket count")?;
        match counts.get_mut(i) {
            Some(slot) => *slot = c,
            None => {
                return Err(errors::usage(format!(
                    "cannot decode: bucket {i} of {buckets}"
                )));
            }
        }
    }
    Sketch::from_bucket_counts(&counts).ok_or_else(|| {
        errors::usage(format!(
            "cannot decode: {buckets} buckets, this build's sketch has {}",
            Sketch::new().bucket_counts().len()
        ))
    })
}

/// A streaming quantile sketch of |x| with bounded memory and relative accuracy
/// `RELATIVE_ACCURACY` (the simulator's, as `compare` uses); mergeable and serialisable.
#[pyclass(module = "clampwise._native")]
#[derive(Clone, Default)]
pub struct QuantileSketch {
    inner: Sketch,
}

#[pymethods]
impl QuantileSketch {
    /// An empty sketch.
    #[new]
    fn new() -> Self {
        Self::default()
    }

    /// Relative accuracy of the quantiles.
    #[classattr]
    #[allow(non_snake_case)]
    fn RELATIVE_ACCURACY() -> f64 {
        quantile_sketch::RELATIVE_ACCURACY
    }

    /// Add |x| for every value of a float64 array.
    fn add(&mut self, values: PyReadonlyArray1<'_, f64>) -> PyResult<()> {
        for &v in values.as_slice()? {
            self.inner.add(v);
        }
        Ok(())
    }

    /// Count the values of `other` too (exact: the buckets add).
    fn merge(&mut self, other: &Self) {
        self.inner.merge(&other.inner);
    }

    /// The q-quantile of |x| (lower rank ⌊q·(n−1)⌋), `None` when empty.
    fn quantile(&self, q: f64) -> Option<f64> {
        self.inner.quantile(q)
    }

    /// Number of values added.
    #[getter]
    fn count(&self) -> u64 {
        self.inner.count()
    }

    /// The sketch as bytes (see the module docs).
    fn to_bytes<'py>(&self, py: Python<'py>) -> Bound<'py, PyBytes> {
        let mut out = Vec::new();
        sketch_bytes(&self.inner, &mut out);
        PyBytes::new(py, &out)
    }

    /// A sketch from `to_bytes`.
    #[staticmethod]
    fn from_bytes(data: &[u8]) -> PyResult<Self> {
        let mut r = Reader { bytes: data, at: 0 };
        let inner = sketch_from(&mut r)?;
        r.end()?;
        Ok(Self { inner })
    }

    fn __reduce__<'py>(
        &self,
        py: Python<'py>,
    ) -> PyResult<(Bound<'py, PyAny>, (Bound<'py, PyBytes>,))> {
        let from = py.get_type::<Self>().getattr("from_bytes")?;
        Ok((from, (self.to_bytes(py),)))
    }
}

fn write_moments(m: &Moments, out: &mut Vec<u8>) {
    out.extend_from_slice(&m.n.to_le_bytes());
    for v in [m.sum, m.sum_sq, m.max_abs] {
        out.extend_from_slice(&v.to_le_bytes());
    }
    let mut s = Vec::new();
    sketch_bytes(&m.sketch, &mut s);
    out.extend_from_slice(&len_u32(s.len()).to_le_bytes());
    out.extend_from_slice(&s);
}

fn read_moments(r: &mut Reader<'_>) -> PyResult<Moments> {
    let n = r.u64("a count")?;
    let sum = r.f64("a sum")?;
    let sum_sq = r.f64("a sum of squares")?;
    let max_abs = r.f64("a maximum")?;
    let len = r.u32("a sketch length")? as usize;
    let mut inner = Reader {
        bytes: r.take(len, "a sketch")?,
        at: 0,
    };
    let sketch = sketch_from(&mut inner)?;
    inner.end()?;
    if sketch.count() != n {
        return Err(errors::usage(format!(
            "cannot decode: a count of {n} over a sketch of {}",
            sketch.count()
        )));
    }
    Ok(Moments {
        n,
        sum,
        sum_sq,
        max_abs,
        sketch,
    })
}

/// `compare`'s error figures of one population (estimate − reference, N·m), mergeable: in
/// N·m, and in % of |reference| over the rows whose |reference| is at least `floor_nm`.
#[pyclass(module = "clampwise._native")]
#[derive(Clone)]
pub struct ErrorStats {
    inner: compare::ErrorStats,
}

fn figures_dict<'py>(
    py: Python<'py>,
    f: (u64, f64, f64, f64, f64, f64),
    unit: &str,
) -> PyResult<Bound<'py, PyDict>> {
    let d = PyDict::new(py);
    d.set_item("n", f.0)?;
    d.set_item(format!("bias_{unit}"), f.1)?;
    d.set_item(format!("rms_{unit}"), f.2)?;
    d.set_item(format!("max_abs_{unit}"), f.3)?;
    d.set_item(format!("p95_{unit}"), f.4)?;
    d.set_item(format!("p99_{unit}"), f.5)?;
    Ok(d)
}

#[pymethods]
impl ErrorStats {
    /// Empty statistics; relative figures over rows with |reference| ≥ `floor_nm` (the CLI's
    /// `--relative-floor-nm`, default 10).
    #[new]
    #[pyo3(signature = (floor_nm=10.0))]
    fn new(floor_nm: f64) -> Self {
        Self {
            inner: compare::ErrorStats::with_floor(floor_nm),
        }
    }

    /// Add errors with their references (float64 arrays of one length), in row order.
    fn add(
        &mut self,
        py: Python<'_>,
        errors_nm: PyReadonlyArray1<'_, f64>,
        references_nm: PyReadonlyArray1<'_, f64>,
    ) -> PyResult<()> {
        let (e, r) = (errors_nm.as_slice()?, references_nm.as_slice()?);
        if e.len() != r.len() {
            return Err(errors::usage(format!(
                "ErrorStats.add: {} errors but {} references",
                e.len(),
                r.len()
            )));
        }
        let (e, r) = (e.to_vec(), r.to_vec());
        py.detach(|| {
            for (&e, &r) in e.iter().zip(&r) {
                self.inner.add(e, r);
            }
        });
        Ok(())
    }

    /// Merge another device's statistics (the same floor).
    fn merge(&mut self, other: &Self) -> PyResult<()> {
        self.inner
            .merge(&other.inner)
            .map_err(|e| errors::usage(format!("ErrorStats.merge: {e}")))
    }

    /// `compare`'s report of this population: `{n, bias_nm, rms_nm, max_abs_nm, p95_nm,
    /// p99_nm, relative: {n, floor_nm, bias_pct, …} or None}`, or `None` when empty.
    fn report<'py>(&self, py: Python<'py>) -> PyResult<Option<Bound<'py, PyDict>>> {
        let Some(r) = self.inner.report() else {
            return Ok(None);
        };
        let d = figures_dict(
            py,
            (r.n, r.bias_nm, r.rms_nm, r.max_abs_nm, r.p95_nm, r.p99_nm),
            "nm",
        )?;
        let rel = match r.relative {
            None => None,
            Some(p) => {
                let f = (
                    p.n,
                    p.bias_pct,
                    p.rms_pct,
                    p.max_abs_pct,
                    p.p95_pct,
                    p.p99_pct,
                );
                let d = figures_dict(py, f, "pct")?;
                d.set_item("floor_nm", p.floor_nm)?;
                Some(d)
            }
        };
        d.set_item("relative", rel)?;
        Ok(Some(d))
    }

    /// The sketch of |error|, N·m (a copy).
    #[getter]
    fn sketch(&self) -> QuantileSketch {
        QuantileSketch {
            inner: self.inner.moments().0.sketch.clone(),
        }
    }

    /// Number of errors added.
    #[getter]
    fn count(&self) -> u64 {
        self.inner.moments().0.n
    }

    /// The floor of the relative figures, N·m.
    #[getter]
    fn floor_nm(&self) -> f64 {
        self.inner.floor_nm()
    }

    /// The statistics as bytes (see the module docs).
    fn to_bytes<'py>(&self, py: Python<'py>) -> Bound<'py, PyBytes> {
        let mut out = Vec::new();
        out.extend_from_slice(STATS_MAGIC);
        out.extend_from_slice(&VERSION.to_le_bytes());
        let (abs, rel) = self.inner.moments();
        out.extend_from_slice(&self.inner.floor_nm().to_le_bytes());
        write_moments(abs, &mut out);
        write_moments(rel, &mut out);
        PyBytes::new(py, &out)
    }

    /// Statistics from `to_bytes`.
    #[staticmethod]
    fn from_bytes(data: &[u8]) -> PyResult<Self> {
        let mut r = Reader { bytes: data, at: 0 };
        r.header(STATS_MAGIC, "error statistics")?;
        let floor_nm = r.f64("the floor")?;
        let abs = read_moments(&mut r)?;
        let rel = read_moments(&mut r)?;
        r.end()?;
        Ok(Self {
            inner: compare::ErrorStats::from_moments(floor_nm, abs, rel),
        })
    }

    fn __reduce__<'py>(
        &self,
        py: Python<'py>,
    ) -> PyResult<(Bound<'py, PyAny>, (Bound<'py, PyBytes>,))> {
        let from = py.get_type::<Self>().getattr("from_bytes")?;
        Ok((from, (self.to_bytes(py),)))
    }
}
