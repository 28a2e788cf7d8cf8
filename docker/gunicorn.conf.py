"""gunicorn settings for shapegauge (used by `make serve` and the container).

Every setting can be overridden from the environment (GUNICORN_CMD_ARGS, or the
variables read below); the app itself reads SHAPEGAUGE_* variables.
"""

import multiprocessing
import os

bind = os.environ.get("SHAPEGAUGE_BIND", "127.0.0.1:8080")
# CPU-bound work: one worker per core is the sweet spot (no threads, no GIL contention).
workers = int(os.environ.get("SHAPEGAUGE_WORKERS", multiprocessing.cpu_count()))
worker_class = "sync"
timeout = int(os.environ.get("SHAPEGAUGE_WORKER_TIMEOUT", "60"))
graceful_timeout = 20
keepalive = 5
accesslog = "-"
errorlog = "-"
loglevel = os.environ.get("SHAPEGAUGE_LOG_LEVEL", "info").lower()
# numpy/scipy: one BLAS thread per worker, so workers do not fight over cores.
raw_env = ["OPENBLAS_NUM_THREADS=1", "OMP_NUM_THREADS=1", "MKL_NUM_THREADS=1"]
# GET forms carry the sample in the query string: allow gunicorn's largest request line
# (8190 bytes, a few hundred values); longer columns go in a POST body.
limit_request_line = 8190
# No control socket: it would live in the user's home and be shared by every instance.
control_socket_disable = True
