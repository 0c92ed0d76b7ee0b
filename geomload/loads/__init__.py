"""Loads stage: masses, the load grid, one flight case's applied and integrated loads, the
flight envelope (Part 23 rules, V-n) and the envelope of loads. The stage takes typed records
(``geomload.config.schema``), never the case file; nothing here prints.

Public functions:

- ``cases``: ``CaseContext``, ``case_grid``, ``solve_case`` (one LoadCase trimmed and
  integrated into a CaseResult), ``check_case_names``;
- ``grid``: ``load_grid``, ``strip_to_grid``; ``masses``: ``mass_distribution``,
  ``inertia_loads``;
- ``flight_case``: ``applied_loads``, ``case_loads``;
- ``beam``: ``integrate``, ``integrate_loads``, ``equilibrium_residual``, ``schrenk``,
  ``spar_line``, ``spar_frame``;
- ``rules_part23``: the rule values (``limit_load_factors``, ``design_speeds``, gusts);
  ``rules_unsymmetric``: the rolling and flaps-down cases;
- ``vn``: ``vn_diagram``, ``critical_points``, ``flight_envelope_cases``;
- ``envelope``: ``envelope_of``, ``critical_rows``;
- ``side_loads``: per-side loads of an unsymmetric case (``normal_force``,
  ``airload_rolling_moment``, ``aileron_torsion``);
- ``records``: one case's records (``LoadGrid``, ``AppliedLoads``, ``SpanLoads``...);
  ``envelope_records``: ``VnDiagram``, ``LoadsEnvelope``...; ``case_records``: ``CaseResult``,
  ``ControlState``.
"""
