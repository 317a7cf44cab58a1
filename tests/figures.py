"""Test helper: a written figure is a real, drawn image."""

from __future__ import annotations

from pathlib import Path


def assert_drawn(png: Path) -> None:
    """A figure that decodes, has a sensible size and is not blank."""
    import matplotlib.image as mpimg
    import numpy as np

    img = mpimg.imread(png)
    assert img.shape[0] >= 200 and img.shape[1] >= 200, png.name
    # Not one flat colour: axes, curves or a colour map drew something.
    assert len(np.unique(img.reshape(-1, img.shape[-1]), axis=0)) > 10, png.name
