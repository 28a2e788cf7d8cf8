"""gunicorn settings for shapegauge (used by `make serve` and the container).

Every setting can be overridden from the environment (GUNICORN_CMD_ARGS, or the
SHAPEGAUGE_* variables read below); the app itself reads SHAPEGAUGE_* variables.
"""

import multiprocessing
import os
import shutil
import tempfile

bind = os.environ.get("SHAPEGAUGE_BIND", "127.0.0.1:8080")
# CPU-bound work: one worker per core is the sweet spot (no threads, no GIL contention).
workers = int(os.environ.get("SHAPEGAUGE_WORKERS", multiprocessing.cpu_count()))
worker_class = "sync"
timeout = int(os.environ.get("SHAPEGAUGE_WORKER_TIMEOUT", "60"))
# SIGTERM: stop accepting, let requests in flight finish for up to this long, then exit 0.
graceful_timeout = int(os.environ.get("SHAPEGAUGE_GRACEFUL_TIMEOUT", "20"))
keepalive = 5
loglevel = os.environ.get("SHAPEGAUGE_LOG_LEVEL", "info").lower()
errorlog = "-"
# One JSON line per request on stdout: never the body. The sample size comes from the
# Shapegauge-N response header, the request id from X-Request-ID.
accesslog = "-"
access_log_format = (
    '{"time": "%(t)s", "request_id": "%({x-request-id}o)s", "method": "%(m)s", "path": "%(U)s", '
    '"status": %(s)s, "duration_ms": %(M)s, "n": "%({shapegauge-n}o)s", "bytes": "%(B)s", "remote": "%(h)s"}'
)
# numpy/scipy: one BLAS thread per worker, so workers do not fight over cores.
raw_env = ["OPENBLAS_NUM_THREADS=1", "OMP_NUM_THREADS=1", "MKL_NUM_THREADS=1"]
# GET forms carry the sample in the query string: allow gunicorn's largest request line
# (8190 bytes, a few hundred values); longer columns go in a POST body.
limit_request_line = 8190
# No control socket: it would live in the user's home and be shared by every instance.
control_socket_disable = True

# Prometheus multiprocess mode: every worker writes its metrics to files in one folder,
# and /metrics adds them up. The folder must exist, empty, before the workers start.
if not os.environ.get("PROMETHEUS_MULTIPROC_DIR"):
    os.environ["PROMETHEUS_MULTIPROC_DIR"] = tempfile.mkdtemp(prefix="shapegauge-metrics-")
_metrics_dir = os.environ["PROMETHEUS_MULTIPROC_DIR"]


def on_starting(server):
    shutil.rmtree(_metrics_dir, ignore_errors=True)
    os.makedirs(_metrics_dir, exist_ok=True)


def child_exit(server, worker):
    from prometheus_client import multiprocess

    multiprocess.mark_process_dead(worker.pid)
