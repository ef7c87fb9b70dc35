"""Batch runs over many brine analyses: saturation states and first solid on evaporation.

``run_batch(FILE, units, temp_c)`` gives one output row per input row (bad rows kept, marked),
in this process, in local processes (``workers=N``) or on a Dask cluster (``scheduler=ADDRESS``),
with the same result row for row.
"""

from phasekit.batch.onset import Onset, first_onset
from phasekit.batch.rows import BatchSpec, output_columns, process_chunk
from phasekit.batch.runner import DEFAULT_CHUNK_ROWS, BatchResult, prepare, run_batch
from phasekit.batch.source import MAX_INPUT_MB, read_source

__all__ = ["DEFAULT_CHUNK_ROWS", "MAX_INPUT_MB", "BatchResult", "BatchSpec", "Onset", "first_onset",
           "output_columns", "prepare", "process_chunk", "read_source", "run_batch"]
