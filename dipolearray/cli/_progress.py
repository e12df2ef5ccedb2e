"""A progress bar for staged generator work (``progress(stage, done, total)`` callbacks)."""

from __future__ import annotations

import sys


class StageBar:
    """tqdm bar that restarts for every new stage name; ``close()`` when done."""

    def __init__(self, enabled=True):
        self.enabled = enabled
        self.bar = None
        self.stage = None

    def __call__(self, stage, done, total):
        """Report ``done`` of ``total`` in ``stage``."""
        if not self.enabled:
            return
        from tqdm import tqdm

        if stage != self.stage:
            self.close()
            self.bar = tqdm(total=total, desc=stage, file=sys.stderr, leave=False)
            self.stage = stage
        self.bar.n = min(done, total)
        self.bar.refresh()

    def close(self):
        """Close the current bar, if any."""
        if self.bar is not None:
            self.bar.close()
            self.bar = None
        self.stage = None
