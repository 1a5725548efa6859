"""Which BLAS numpy runs here: numpy's version, the BLAS shared library loaded into this
process (after a product that needs it), and, for OpenBLAS, its core type, configuration
and thread count (through its own C API). Printed as one JSON object by `python3 blas_info.py`;
`describe()` returns the same dictionary for the benchmark scripts."""
import ctypes
import json
import os

import numpy as np


def describe():
    a = np.ones((64, 64))
    _ = a @ a
    libs = sorted({line.split()[-1] for line in open("/proc/self/maps") if "blas" in line.split()[-1].lower()})
    info = {"numpy": np.__version__, "libraries": libs, "OPENBLAS_NUM_THREADS": os.environ.get("OPENBLAS_NUM_THREADS"),
            "OPENBLAS_CORETYPE": os.environ.get("OPENBLAS_CORETYPE"), "OPENBLAS_L2_SIZE": os.environ.get("OPENBLAS_L2_SIZE")}
    for lib in libs:
        if "openblas" not in os.path.basename(lib).lower():
            continue
        try:
            ob = ctypes.CDLL(lib)
            ob.openblas_get_corename.restype = ctypes.c_char_p
            ob.openblas_get_config.restype = ctypes.c_char_p
            info["openblas"] = {"library": lib, "core": ob.openblas_get_corename().decode(), "config": ob.openblas_get_config().decode(),
                                "threads": ob.openblas_get_num_threads()}
        except (OSError, AttributeError) as e:  # pragma: no cover - another BLAS build
            info["openblas"] = {"library": lib, "error": str(e)}
    return info


if __name__ == "__main__":
    print(json.dumps(describe()))
