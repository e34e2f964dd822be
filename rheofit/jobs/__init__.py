"""Orchestration: the analysis behind a report (:mod:`~rheofit.jobs.analysis`) and the demo (:mod:`~rheofit.jobs.demo`)."""
