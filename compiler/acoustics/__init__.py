"""Pure physics in SI units: air, tuning, radiation, bore elements, tone holes, impedance, solvers.

Nothing here imports ``compiler.spec``, ``compiler.geometry`` or ``compiler.emit``.
"""
