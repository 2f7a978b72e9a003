"""The object every command receives: options of the top-level group and a lazy Session."""

from __future__ import annotations

from dataclasses import dataclass, field
from typing import Any


@dataclass
class AppContext:
    store_path: str | None
    plugin_files: list[str] = field(default_factory=list)
    disabled: list[str] = field(default_factory=list)
    _session: Any = None

    def session(self):
        if self._session is None:
            from saltbench.api import Session

            self._session = Session(self.store_path, plugin_files=self.plugin_files, disabled=self.disabled)
        return self._session
