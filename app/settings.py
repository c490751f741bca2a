"""Server settings: where rooms live, where the server listens."""

from __future__ import annotations

from dataclasses import dataclass, field
from pathlib import Path

from platformdirs import user_data_dir

from app.assets import asset_dir

LOCAL_HOSTS = frozenset({"127.0.0.1", "localhost", "::1", "[::1]"})
# Debian's chromium on a machine with no network and no GPU (browser tests and the benchmark).
CHROMIUM_FLAGS = (
    "--no-sandbox",
    "--disable-gpu",
    "--disable-background-networking",
    "--disable-component-update",
    "--disable-sync",
    "--no-first-run",
    "--disable-quic",
)


def default_data_dir() -> Path:
    return Path(user_data_dir("leafcast", appauthor=False))


@dataclass
class Settings:
    data_dir: Path = field(default_factory=default_data_dir)
    host: str = "127.0.0.1"
    port: int = 8000
    samples_dir: Path | None = field(default_factory=lambda: asset_dir("sample_rooms"))
    seed_samples: bool = True
    extra_allowed_hosts: frozenset[str] = frozenset()
    max_analysis_s: float = 20.0  # an analysis that would take longer is refused up front or cancelled (503)
    analysis_workers: int = 2  # analyses computed at once; the rest wait (small requests never do)

    @property
    def allowed_hosts(self) -> frozenset[str]:
        hosts = set(LOCAL_HOSTS) | set(self.extra_allowed_hosts)
        if self.host not in ("0.0.0.0", "::"):
            hosts.add(self.host)
        return frozenset(hosts)
