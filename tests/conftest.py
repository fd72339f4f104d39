import pytest

from compare.thermo import phreeqc

requires_phreeqc = pytest.mark.skipif(not phreeqc.available(), reason="optional extra 'ions' (phreeqpython) missing")


@pytest.fixture
def toy():
    """Register the test technology for the duration of a test."""
    from compare.tech.base import register, unregister
    from tests.toytech import TOY
    register(TOY)
    yield TOY
    unregister("toy")
