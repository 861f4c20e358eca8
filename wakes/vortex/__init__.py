"""Physics of free vorticity: dynamics, integrators, diagnostics, initial fields, ParticleFlow.

Every velocity comes from the engine (:mod:`wakes.induction`).
"""
