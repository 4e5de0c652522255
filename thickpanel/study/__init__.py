"""Design studies: variant sweeps of one design over axes of design keys, run in-process, on a local
Dask cluster or on a given Dask scheduler, resumable, with a Pareto view.

>>> from thickpanel.study import load_study, run_study       # doctest: +SKIP
>>> res = run_study(load_study("examples/studies/study-disc.toml"), workers=2)  # doctest: +SKIP
"""

from .run import TIMING_COLUMNS, StudyRun, evaluate, flatten_metrics, read_rows, run_study, warm, write_tables
from .spec import Axis, Study, StudyError, Variant, load_study, study_from_dict, to_toml, variant_id, variants

__all__ = ["Axis", "Study", "StudyError", "Variant", "StudyRun", "load_study", "study_from_dict", "variants",
           "variant_id", "to_toml", "run_study", "evaluate", "flatten_metrics", "read_rows", "write_tables",
           "warm", "TIMING_COLUMNS"]
