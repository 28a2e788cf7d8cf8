"""The scipy calls that define each two-sample test of /v1/compare, as the tests'
reference (imports nothing from ``service``)."""

from __future__ import annotations

import warnings

from scipy import stats


def quiet(fn, *args, **kwargs):
    """A scipy reference that warns when its p-value leaves its table (UserWarning)."""
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", UserWarning)
        return fn(*args, **kwargs)


SCIPY_TWO_SAMPLE = {  # name -> the scipy call that defines it (statistic, p-value)
    "kolmogorov_smirnov": lambda x, y: stats.ks_2samp(x, y),
    "anderson_darling": lambda x, y: quiet(stats.anderson_ksamp, [x, y], variant="midrank"),
    "cramer_von_mises": lambda x, y: stats.cramervonmises_2samp(x, y),
    "location": lambda x, y: stats.ttest_ind(x, y, equal_var=False),
    "scale": lambda x, y: stats.levene(x, y, center="median"),
}
