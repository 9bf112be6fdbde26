"""Invented example systems in the orbitdeck-system/1 format."""

from importlib.resources import files

DEFAULT_DEMO = "ossery_loom"


def demo_path(name: str = DEFAULT_DEMO):
    """Path of a bundled demo system file, by its stem."""
    return files(__name__) / f"{name}.toml"


def demo_names() -> list[str]:
    """Stems of every bundled demo system, sorted."""
    return sorted(p.name[:-5] for p in files(__name__).iterdir() if p.name.endswith(".toml"))
