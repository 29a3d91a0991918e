"""Imported by the build's fork server after the pipeline, to freeze what those imports made.

Only :mod:`kitleaf.site.pool` names this module, as the fork server's last preload. Frozen
objects are left out of every later garbage collection, so the workers forked from the server
do not write to (and so copy) the pages that hold the imported modules' objects: about 13 MB
less private memory per worker in a build of the generated guides. It also sets the C
library's malloc thresholds once, for the workers to inherit.
"""

import gc

from kitleaf.memory import keep_freed_memory

keep_freed_memory()  # inherited by every worker: see kitleaf.memory
gc.collect()
gc.freeze()
