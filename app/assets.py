"""Where the templates, static files and sample rooms are: inside the installed wheel, or the source checkout.

A wheel carries them under ``app/_assets/`` (see ``[tool.hatch.build.targets.wheel.force-include]`` in
pyproject.toml); an editable install finds them beside the package, in the checkout.
"""

from __future__ import annotations

from importlib import resources
from pathlib import Path

CHECKOUT_ROOT = Path(__file__).resolve().parent.parent


def asset_dir(name: str) -> Path:
    """The folder ``templates``, ``static`` or ``sample_rooms``, from the package first, then the checkout."""
    packaged = resources.files("app").joinpath("_assets", name)
    if packaged.is_dir():
        return Path(str(packaged))
    return CHECKOUT_ROOT / name
