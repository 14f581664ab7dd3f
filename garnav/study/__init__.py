"""Studies: many route cases at once — every query × pose × posture × size × robot — on one
machine or a Dask cluster, with resumable Parquet results and a summary report.

Public API: the study file (:func:`load_study`, :func:`loads_study`, :class:`Study`), graded sizes
(:class:`GradingRule`, :func:`grade_garment`), the expansion into cases (:func:`prepare_study`),
running (:func:`run_study` → :class:`StudyRun`), the rows (:func:`read_rows`, :data:`COLUMNS`) and
the summary (:func:`summarise`, :func:`write_report`). See docs/studies.md.

Dask, pyarrow and matplotlib come with the optional extra ``pip install garnav[cluster]``.
"""

from garnav.study.cases import Case, Chunk, GarmentInputs, PreparedStudy, prepare_study
from garnav.study.engine import StudyRun, run_prepared, run_study
from garnav.study.grading import GradingRule, grade_garment
from garnav.study.results import COLUMNS, STATUSES, read_rows
from garnav.study.studyfile import MEASURES, Study, load_study, loads_study
from garnav.study.worker import Settings, Workbench, measure_case

__all__ = [
    "COLUMNS",
    "Case",
    "Chunk",
    "GarmentInputs",
    "GradingRule",
    "MEASURES",
    "PreparedStudy",
    "STATUSES",
    "Settings",
    "Study",
    "StudyRun",
    "Workbench",
    "grade_garment",
    "load_study",
    "loads_study",
    "measure_case",
    "prepare_study",
    "read_rows",
    "run_prepared",
    "run_study",
]
