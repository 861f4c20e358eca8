"""Body models: what the time loop asks of every kind of body.

A body model is built from its case spec and answers:

* ``surfaces(time)`` -- its lifting surfaces (:class:`LiftingSurface`) at
  ``time``, in the global frame, with their motion;
* ``trefftz`` -- whether its surfaces take part in the Trefftz-plane drag;
* ``loads_row(strips, trefftz_drag)`` -- the body's columns of one row of
  the loads table;
* ``section_table(strips)`` -- its spanwise (or radial) distribution;
* ``summary(loads)`` -- the figures quoted in ``summary.json``.
* ``tables()`` -- extra result tables ``{file name: DataFrame}`` (may be empty).
* ``new_wake(surface, time, settings)`` -- an empty wake for one of its
  surfaces (a wing's: :class:`WakeSheet`; a rotor blade's may roll up).
* ``motion_state()`` / ``restore_motion_state(state)`` -- the body's own
  state that one step hands to the next, ``{name: ndarray or float}``
  (a flapping rotor's flap angles; empty when the motion is a function of
  time), captured with the loop's state and stored in checkpoints.

:data:`BODY_MODELS` maps the case's body ``type`` to the model class; new
body types (rotors, propellers, turbines) register here.
"""

from __future__ import annotations

from .rotor_body import RotorBody
from .wing_body import WingBody

BODY_MODELS: dict[str, type] = {"wing": WingBody, "rotor": RotorBody}
