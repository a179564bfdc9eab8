"""The application layer: the workflows that combine the core, the profile and the journal.

* :mod:`~gasbench.workflows.model` — the plan's records.
* :mod:`~gasbench.workflows.build` — build a plan from a profile; fit the observed draw.
* :mod:`~gasbench.workflows.findings` — every rule that judges a bench, once.
* :mod:`~gasbench.workflows.holds` — hold tests: the gauge specification, one record, storing
  and reading them.
* :mod:`~gasbench.workflows.bench` — a bench with the journal's state: its plan and findings.

Nothing here prints or formats: results are records and findings are codes with numbers.
"""
