"""clampwise from Python: the friction-torque estimator of a brake or clutch, for notebooks
and fleets.

CAUTION: every torque here is an estimate, validated only as far as the project's tests; it is
not a certified safety function. Validate on the bench for each lining and geometry, and follow
the applicable functional-safety process.

- ``replay(config, trace)``: the estimate file's columns as a DataFrame, the same names,
  order and values as ``clampwise replay`` writes (a trace file in any format the CLI reads, or
  a DataFrame of canonical columns).
- ``read_trace(config, trace)``: a trace file as the estimator is given it (canonical columns,
  SI units), for chunked work.
- ``Estimator(config)``: ``step_batch(arrays)``, ``save()``/``restore(snapshot)`` (exact resume),
  ``save_record()``/``restore_record(record)`` (the slow state, as across a power cycle).
- ``compare``, ``fit``, ``synth``: the CLI's subcommands, returning their ``--json`` summary.
- ``QuantileSketch``, ``ErrorStats``: mergeable, serialisable accuracy statistics (fleets).
- Errors raise ``ClampwiseError`` subclasses carrying the CLI's located message.
"""

from __future__ import annotations

import json
import os
import tempfile
from typing import Any, Mapping, Optional, Sequence, Union

import numpy as np
import pandas as pd

from . import _native
from ._native import (
    CAUTION,
    HEADER,
    RECORD_LEN,
    STATE_NAMES,
    ClampwiseError,
    ClampwiseIOError,
    ConfigError,
    DataError,
    ErrorStats,
    InternalError,
    QuantileSketch,
    ThresholdError,
    UsageError,
)

__all__ = [
    "CAUTION",
    "HEADER",
    "RECORD_LEN",
    "STATE_NAMES",
    "ClampwiseError",
    "ClampwiseIOError",
    "ConfigError",
    "DataError",
    "ErrorStats",
    "Estimator",
    "InternalError",
    "QuantileSketch",
    "ThresholdError",
    "UsageError",
    "compare",
    "fit",
    "read_trace",
    "replay",
    "synth",
]

PathLike = Union[str, "os.PathLike[str]"]

#: The canonical trace columns ``Estimator.step_batch`` and a DataFrame trace use (SI units).
CANONICAL_COLUMNS = (
    "line",
    "t_s",
    "force_1_N", "force_2_N", "force_3_N", "force_4_N",
    "force_1_counts", "force_2_counts", "force_3_counts", "force_4_counts",
    "force_1_valid", "force_2_valid", "force_3_valid", "force_4_valid",
    "omega_in_rad_s",
    "omega_out_rad_s",
    "command",
    "temp_C",
    "ambient_C",
    "torque_ref_Nm",
)


def _columns(raw: Mapping[str, Any], categorical: bool) -> dict:
    """The estimate columns in file order from the extension's raw columns: `state` and
    `flags` as their file text (categoricals for a DataFrame, object arrays otherwise)."""
    codes = np.asarray(raw["state_code"])
    bits = np.asarray(raw["flags_bits"])
    texts = raw["flags_text"]
    uniq, inverse = np.unique(bits, return_inverse=True)
    flag_names = [texts[int(b)] for b in uniq]
    out = {}
    for name in HEADER:
        if name == "state":
            if categorical:
                out[name] = pd.Categorical.from_codes(codes, categories=list(STATE_NAMES))
            else:
                out[name] = np.asarray(STATE_NAMES, dtype=object)[codes]
        elif name == "flags":
            if categorical:
                out[name] = pd.Categorical.from_codes(
                    inverse.reshape(-1).astype(np.int64), categories=flag_names
                )
            else:
                out[name] = np.asarray(flag_names, dtype=object)[inverse.reshape(-1)]
        else:
            out[name] = raw[name]
    return out


def _frame(raw: Mapping[str, Any]) -> pd.DataFrame:
    return pd.DataFrame(_columns(raw, categorical=True), columns=list(HEADER))


def _path(p: PathLike) -> str:
    return os.fspath(p)


class Estimator:
    """The core's estimator for one device config, held between batches.

    ``step_batch`` continues where the previous batch stopped: a trace stepped in chunks gives
    the rows of one pass, bit for bit.

    ``save()`` returns the core's full-state snapshot (every filter, debounce counter, stuck
    window, stick/slip state, sub-rate sum and the slow state; CRC-checked, tied to the config's
    checksum and channel count); ``restore(snapshot)`` or ``Estimator(config, snapshot)``
    continues exactly there, so chunks carried between fresh objects, processes or workers
    give one pass bit for bit too. A snapshot is for the host; it is not an archive format.

    ``save_record(sequence)`` returns the core's state record (``RECORD_LEN`` bytes: wear,
    bedding, temperatures, the adaptation's state), what a controller keeps across power
    cycles; ``restore_record(record)`` or ``Estimator(config, record=record)`` resumes from it
    as the firmware does: the slow state carries over, the sensor filters and the stick/slip
    decision start afresh (the first samples differ from one pass).

    CAUTION: every torque is an estimate, not a certified safety function.
    """

    def __init__(self, config: PathLike, snapshot: Optional[bytes] = None, *,
                 record: Optional[bytes] = None):
        self._native = _native.Estimator(
            _path(config),
            None if snapshot is None else bytes(snapshot),
            record=None if record is None else bytes(record),
        )

    def step_batch(self, arrays: Union[Mapping[str, Any], pd.DataFrame]) -> dict:
        """Step every sample of a batch in order. ``arrays``: canonical column name → values
        (``t_s``, ``force_k_N`` or ``force_k_counts``, optional ``force_k_valid``,
        ``omega_in_rad_s``, ``omega_out_rad_s`` (a clutch), optional ``command``, ``temp_C``,
        ``ambient_C``, ``torque_ref_Nm``, ``line``), SI units, NaN for no value. Returns the
        estimate columns (numpy arrays, in file order)."""
        if isinstance(arrays, pd.DataFrame):
            arrays = {c: arrays[c] for c in arrays.columns}
        given = {}
        for name, values in arrays.items():
            if name in CANONICAL_COLUMNS:
                given[name] = np.ascontiguousarray(np.asarray(values, dtype=np.float64))
        return _columns(self._native.step_batch(given), categorical=False)

    def save(self) -> bytes:
        """The core's full-state snapshot: ``restore`` continues exactly here."""
        return self._native.save()

    def restore(self, snapshot: bytes) -> None:
        """Continue exactly where ``save`` was called (a refused snapshot changes nothing)."""
        self._native.restore(bytes(snapshot))

    def save_record(self, sequence: int = 0) -> bytes:
        """The core's state record, the slow state only (see the class docs)."""
        return self._native.save_record(sequence)

    def restore_record(self, record: bytes) -> None:
        """Resume from a state record written by ``save_record``, as after a power cycle."""
        self._native.restore_record(bytes(record))

    @property
    def next_line(self) -> int:
        """Line number given to the next sample of a batch without a ``line`` array."""
        return self._native.next_line

    @property
    def channels(self) -> int:
        """Force channels of the config."""
        return self._native.channels


def replay(
    config: PathLike,
    trace: Union[PathLike, pd.DataFrame],
    *,
    skip_bad_rows: bool = False,
    delimiter: Optional[str] = None,
    decimal: Optional[str] = None,
    sample_period_s: Optional[float] = None,
    column_map: Sequence[str] = (),
    resample: Optional[str] = None,
) -> pd.DataFrame:
    """Replay a trace through the core's estimator: the estimate file's columns, in its order,
    with the values ``clampwise replay`` writes (NaN where the file has an empty cell).

    ``trace``: a file path (CSV in any dialect, MDF4, Parquet when built in; read by the
    simulator's own readers, the keyword arguments as the CLI's options) or a DataFrame of
    canonical columns (see ``Estimator.step_batch``; ``line`` defaults to the row number from 1).
    The reader's summary is in ``DataFrame.attrs["summary"]`` for a file.
    """
    if isinstance(trace, pd.DataFrame):
        est = Estimator(config)
        frame = pd.DataFrame(est.step_batch(trace), columns=list(HEADER))
        for name in ("state", "flags"):
            frame[name] = frame[name].astype("category")
        return frame
    raw, summary = _native.replay(
        _path(config),
        _path(trace),
        skip_bad_rows=skip_bad_rows,
        delimiter=delimiter,
        decimal=decimal,
        sample_period_s=sample_period_s,
        column_map=list(column_map),
        resample=resample,
    )
    frame = _frame(raw)
    frame.attrs["summary"] = json.loads(summary)
    return frame


def read_trace(
    config: PathLike,
    trace: PathLike,
    *,
    skip_bad_rows: bool = False,
    delimiter: Optional[str] = None,
    decimal: Optional[str] = None,
    sample_period_s: Optional[float] = None,
    column_map: Sequence[str] = (),
    resample: Optional[str] = None,
) -> pd.DataFrame:
    """A trace file read as ``replay`` reads it for ``config`` (column map, units, dialect,
    resampling, time checks): one row per sample the estimator is given, in canonical columns
    (SI units, NaN for no value) with its source ``line``."""
    raw = _native.read_trace(
        _path(config),
        _path(trace),
        skip_bad_rows=skip_bad_rows,
        delimiter=delimiter,
        decimal=decimal,
        sample_period_s=sample_period_s,
        column_map=list(column_map),
        resample=resample,
    )
    return pd.DataFrame(dict(raw))


def _result(returned, raise_on_failure: bool) -> dict:
    document, human, failure = returned
    out = json.loads(document)
    out["human"] = human
    if failure is not None and raise_on_failure:
        err = ThresholdError(failure[0])
        err.exit_code = failure[1]
        err.kind = "threshold"
        err.result = out
        raise err
    return out


def compare(
    estimates: Union[PathLike, Sequence[PathLike]],
    *,
    config: Optional[PathLike] = None,
    raise_on_breach: bool = False,
    **gates: Any,
) -> dict:
    """``clampwise compare``: each estimate file's error figures against its reference torque
    (overall, slipping, gated, by region; holding rows against ±capacity). Returns the CLI's
    ``--json`` document (``files[i]["report"]``, ``files[i]["breaches"]``, ``ok``) plus the
    human summary under ``"human"``. Gates as the CLI's options (``max_rms_nm=…``,
    ``gate_states=["slipping"]``, ``relative_floor_nm=10.0``, ``regions_csv=PATH``); a breach
    sets ``ok`` false, or raises ``ThresholdError`` with ``raise_on_breach``."""
    if isinstance(estimates, (str, os.PathLike)):
        estimates = [estimates]
    returned = _native.compare(
        [_path(e) for e in estimates],
        config=None if config is None else _path(config),
        **gates,
    )
    return _result(returned, raise_on_breach)


def fit(
    config: PathLike,
    trace: PathLike,
    *,
    out: Optional[PathLike] = None,
    raise_on_incomplete: bool = False,
    **options: Any,
) -> dict:
    """``clampwise fit``: the μ table fitted to a trace with a reference torque. Returns the
    CLI's ``--json`` document plus ``"table"`` (a DataFrame of the fitted cells: temperature,
    slip speed, coverage, prior, fitted, standard error), ``"config_text"`` (the config with the
    fitted table, as ``--out`` writes it; None when nothing was fitted) and ``"human"``.
    Options as the CLI's (``min_coverage``, ``min_force_n``, ``require_full_coverage``,
    ``coverage_csv``, ``plot``, reading options)."""
    with tempfile.TemporaryDirectory(prefix="clampwise-fit-") as tmp:
        target = _path(out) if out is not None else os.path.join(tmp, "fitted.toml")
        returned = _native.fit(_path(config), _path(trace), out=target, **options)
        result = _result(returned, raise_on_incomplete)
        written = result.get("written") or []
        text = None
        if target in written:
            with open(target, encoding="utf-8") as f:
                text = f.read()
    result["config_text"] = text
    cells = result.get("report", {}).get("cells", [])
    result["table"] = pd.DataFrame(cells)
    if out is None and "written" in result:
        result["written"] = [w for w in result["written"] if w != target]
    return result


def synth(config: PathLike, out: PathLike, **options: Any) -> dict:
    """``clampwise synth``: an invented trace from the simulator's independent f64 plant,
    written to ``out``. Returns the CLI's ``--json`` document (``summary``) plus ``"human"``.
    Options as the CLI's (``scenario``, ``rows``, ``duration_s``, ``seed``, ``mu_scale``,
    ``mu_fade_per_k``, ``truth_config``, ``force_noise_n``, ``faults``)."""
    if "truth_config" in options and options["truth_config"] is not None:
        options["truth_config"] = _path(options["truth_config"])
    return _result(_native.synth(_path(config), _path(out), **options), False)
