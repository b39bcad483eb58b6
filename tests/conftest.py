import os

import pytest

# Tests never reach the network: astropy must use the IERS tables it ships.
os.environ.setdefault("ASTROPY_IERS_AUTO_DOWNLOAD", "False")


@pytest.fixture(autouse=True)
def _astropy_offline():
    try:
        from astropy.utils import iers
    except ImportError:
        yield
        return
    with iers.conf.set_temp("auto_download", False), iers.conf.set_temp("auto_max_age", None):
        yield
