"""Scenario files: key table, loading, and building the solved pair.

The key table (:mod:`.schema`), loading and validating TOML into frozen specs
(:mod:`.load`), and building model objects and the solved pair from them (:mod:`.build`).

``schema`` and ``load`` are input records and import nothing of ridesim above the base layer;
``build`` sits above the solver (it turns specs into model objects and solves the pair).
"""
