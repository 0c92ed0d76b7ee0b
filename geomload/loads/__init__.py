"""Loads stage: masses, the load grid, one flight case's applied and integrated loads, the
flight envelope (Part 23 rules, V-n) and the envelope of loads.

Public: ``grid.load_grid``, ``masses.mass_distribution``, ``masses.inertia_loads``,
``flight_case.applied_loads``, ``flight_case.case_loads``, ``beam.integrate``,
``beam.integrate_loads``, ``beam.equilibrium_residual``, ``beam.schrenk``, ``vn.vn_diagram``,
``vn.flight_envelope_cases``, ``rules_part23.*``, ``envelope.envelope_of``; records in
``records``. The stage takes typed records (``geomload.config.schema``), never the case file.
"""
