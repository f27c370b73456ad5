"""One namespace of the cache folder, stamped with :func:`~hazlint.store.keys.code_stamp`:
the base of the design, result and report stores."""
from __future__ import annotations

import os

from .keys import code_stamp
from .parse import ParseCache


class Namespace:
    """One namespace of the cache folder, stamped with :func:`code_stamp`."""

    NAMESPACE = ""

    def __init__(self, directory: str | os.PathLike | None = None, *, version: str | None = None,
                 limit_mb: int | None = None):
        self.store_ = ParseCache(directory, namespace=self.NAMESPACE,
                                 version=version if version is not None else code_stamp(),
                                 limit_mb=limit_mb)

    @property
    def enabled(self) -> bool:
        return self.store_.enabled

    def entry(self, key: str) -> dict | None:
        """The entry's data, or None on a miss; a broken cache never stops a lint run."""
        try:
            return self.store_.load(key)
        except Exception:
            return None
