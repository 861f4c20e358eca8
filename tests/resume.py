"""A run stopped part-way and resumed from its checkpoint, beside the same run uninterrupted."""

import signal

from wakes.io.checkpoint import prepare_resume, write_checkpoint
from wakes.run import run_case
from wakes.watchdog import RunControl


def stopped_and_resumed(case, folder, stop_after: int = 7, every: int = 5):
    """Run ``case`` to its end; run it again with a checkpoint every ``every`` steps into
    ``folder``, stopped (as SIGINT asks) after step ``stop_after``; resume from the newest
    checkpoint. Returns ``(full, part, state, resumed)``: the uninterrupted run, the stopped
    one, the loop state it was resumed from and the resumed run."""
    full = run_case(case)
    control = RunControl(checkpoint_every=every, keep_partial=True,
                         save=lambda st: write_checkpoint(folder, st, case.to_toml(), case.source))

    def stop(step, steps):
        if step == stop_after:
            control.stop_signal = signal.SIGINT

    part = run_case(case, control=control, progress=stop)
    resumed_case, state = prepare_resume(folder)
    return full, part, state, run_case(resumed_case, resume=state)
