from __future__ import annotations

from dataclasses import dataclass

from ._build import build_scene
from ._schema import parse_config


@dataclass(frozen=True)
class ConfigScene:
    """Scene maker from a TOML config: each state point overrides dotted config keys.

    ``ConfigScene(text)({"arrangement.volume_fraction": 0.2, "population.0.polar": "1.5 um"}, seed)``
    builds the config's scene with those keys replaced and ``arrangement.seed = seed``,
    so any config parameter (fraction, contrast, aspect ratio, clustering, chain
    length, ...) can be swept. Picklable (it holds only the text).

    Attributes
    ----------
    text : str
        The TOML config.
    """

    text: str

    def __call__(self, point, seed):
        """The scene of one realization."""
        overrides = dict(point)
        overrides["arrangement.seed"] = int(seed) % (2**31)
        return build_scene(parse_config(self.text, "<sweep>", overrides=overrides))
