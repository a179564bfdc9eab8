"""The application layer: the workflows that combine the core, the profile and the journal.

* :mod:`~benchwarden.workflows.model` — the plan's records.
* :mod:`~benchwarden.workflows.build` — build a plan from a profile; fit the observed draw.
* :mod:`~benchwarden.workflows.findings` — every rule that judges a bench, once.
* :mod:`~benchwarden.workflows.holds` — hold tests: the gauge specification, one record, storing
  and reading them.
* :mod:`~benchwarden.workflows.bench` — a bench with the journal's state: its plan and findings.

Nothing here prints or formats: results are records and findings are codes with numbers.
"""
