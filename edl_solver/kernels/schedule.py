"""Dynamic sharing of a compiled loop's work between threads: a shared counter that hands out chunks.

numba's ``prange`` splits its range into one contiguous block per thread, whatever the threading layer (omp and
workqueue ignore ``numba.set_parallel_chunksize``; only tbb schedules dynamically). A batch's cases do not cost
the same (a stiff double layer takes more Newton steps and finer grids than a thin one, and sweep grids are
ordered, so the costs drift along the range), and on a shared machine a thread may lose its core for a while:
then the other threads wait for the slowest block. Here each thread instead takes the next chunk from a counter
incremented atomically (``fetch_add``) until none is left, so the threads finish within a chunk of each other.
"""

from __future__ import annotations

from numba import njit, types
from numba.extending import intrinsic

#: Cases a thread takes at a time at most: a few hundred microseconds of work, so the counter is touched rarely
#: and the threads finish within about that of each other.
MAX_CHUNK = 16
#: Chunks a batch is cut into at least (smaller chunks, down to one case, for small batches): 8 per thread for
#: 128 threads, since the kernels cannot ask numba for the thread count (``numba.get_num_threads`` in compiled
#: code makes it uncacheable).
MIN_CHUNKS = 1024


@intrinsic
def fetch_add(typingctx, counter, value):
    """Add ``value`` to ``counter[0]`` (a 1-D int64 array) atomically; returns its value before.

    Monotonic ordering: only the atomicity matters (each value is handed out once); what the threads write is
    published by the end of the parallel region.
    """
    if not (isinstance(counter, types.Array) and counter.dtype == types.int64 and counter.ndim == 1):
        return None
    sig = types.int64(counter, types.int64)

    def codegen(context, builder, signature, args):
        array = context.make_array(signature.args[0])(context, builder, args[0])
        step = context.cast(builder, args[1], signature.args[1], types.int64)
        return builder.atomic_rmw("add", array.data, step, "monotonic")

    return sig, codegen


@njit(cache=True)
def chunk_size(n):
    """Cases per chunk for a batch of ``n``: ``MAX_CHUNK``, or fewer (at least one) to make ``MIN_CHUNKS``."""
    return max(1, min(MAX_CHUNK, n // MIN_CHUNKS))
