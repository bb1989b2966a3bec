"""Reuse machinery behind one door: keys, the on-disk store, the cached parallel map, the collector pause.

Every other package imports from `registry.incremental` only (never its modules), and nothing outside
this package imports hashlib, pickle, multiprocessing, concurrent.futures or gc
(tests/test_layout.py holds both).
"""
from registry.incremental.collector import collector_paused, collector_released
from registry.incremental.kept import keep_in, kept
from registry.incremental.keys import array_key, code_key, content_parts, key_of, line_digest, repr_key, text_key
from registry.incremental.parallel import cached_map, ordered_map
from registry.incremental.signing import signing_key
from registry.incremental.sitekey import site_key
from registry.incremental.store import (MAX_ENTRY_BYTES, DiskCache, prune, read_regular_file, version_folder,
                                        write_text_atomically)

__all__ = ["MAX_ENTRY_BYTES", "DiskCache", "array_key", "cached_map", "code_key", "collector_paused", "collector_released",
           "content_parts", "keep_in", "kept", "key_of", "line_digest", "ordered_map", "prune", "read_regular_file",
           "repr_key", "signing_key", "site_key", "text_key", "version_folder", "write_text_atomically"]
