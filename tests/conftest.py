import os

import pytest


def pytest_addoption(parser):
    parser.addoption("--fuzz", choices=("fast", "long"), default="fast",
                     help="profile of the reader fuzzing (tests/properties/test_readers.py): "
                     "fast (default, a few dozen examples) or long (thousands)")


def pytest_configure(config):
    if config.getoption("--fuzz", "fast") == "long":
        os.environ["FRAMESHIFT_FUZZ"] = "long"

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
