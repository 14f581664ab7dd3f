"""garnav benchmarks: speed and memory figures measured against reference methods in the same run.

Run ``python -m benchmarks --help``. Nothing here is imported by the ``garnav`` package; the test
suite only runs a ``--quick`` smoke pass and never asserts timings.
"""
