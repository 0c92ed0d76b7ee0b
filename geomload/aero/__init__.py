"""Aerodynamics stage: ISA atmosphere, vortex lattice on the mean surface, linear solution,
trim. Stages take typed records; nothing here reads the case file or prints.

Public functions (the ones other stages, the pipeline and the CLI call):

- ``atmosphere``: ``isa``, ``density_and_sound`` (the atmosphere form every stage takes),
  ``airspeeds``, ``tas_from_eas``, ``eas_from_tas``, ``mach``, ``dynamic_pressure``;
- ``lattice``: ``build_lattice``; ``controls``: ``check_controls``, ``deflection_rhs``;
- ``solve``: ``AeroModel`` (``.solve``, ``.solve_many``, ``.coefficients``, ``.alpha_for_cl``,
  ``.stall``, ``.solve_rhs``);
- ``models``: ``MachModels``, ``cached_lattice``, ``lattice_mach``, ``analyse_at_alpha``;
- ``trim``: ``trim_case``, ``trim``, ``stall_messages``; ``pitch_trim``: ``trim_pitch``,
  ``check_cg``; ``roll``: ``ControlModel``, ``side_strip_loads``;
- ``sweep``: ``lift_curve`` (the run's CL-alpha curve);
- ``refinement``: ``check_convergence`` (three lattice densities, Richardson);
  ``convergence``: ``error_bars`` (the run's discretization error bars);
- ``control_models``: ``ControlModels`` (the full-span lattice with the control surfaces, one
  ``ControlModel`` per Mach), ``axis_coefficients``;
- ``records``: the stage's records (``Lattice``, ``AeroSolution``).

Submodules import numpy only at import time; scipy is imported inside the functions that use it.
"""
