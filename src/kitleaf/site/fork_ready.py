"""Imported by the build's fork server after the pipeline, to freeze what those imports made.

Only :mod:`kitleaf.site.pool` names this module, as the fork server's last preload. Frozen
objects are left out of every later garbage collection, so the workers forked from the server
do not write to (and so copy) the pages that hold the imported modules' objects: about 13 MB
less private memory per worker in a build of the generated guides. It also sets the C
library's malloc thresholds once, for the workers to inherit, and has the server killed when
the build process dies (see :mod:`kitleaf.site.lifetime`).
"""

import gc

from kitleaf.memory import keep_freed_memory
from kitleaf.site.lifetime import die_with_parent

keep_freed_memory()  # inherited by every worker: see kitleaf.memory
# The workers keep the server's "alive" pipe open, so it would outlive a killed build. (The
# kernel watches the build's thread that started the server: kitleaf builds in the main one.)
die_with_parent()
gc.collect()
gc.freeze()
