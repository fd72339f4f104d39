import pytest

from compare.thermo import phreeqc

requires_phreeqc = pytest.mark.skipif(not phreeqc.available(), reason="optional extra 'ions' (phreeqpython) missing")


@pytest.fixture
def toy():
    """For the duration of a test, the test technology is the only one registered (the built-in ones are set
    aside and put back afterwards), so that pipeline tests see one known technology."""
    from compare.tech import load_builtin
    from compare.tech.base import TECHNOLOGIES, register
    from tests.toytech import TOY
    load_builtin()
    saved = dict(TECHNOLOGIES)
    TECHNOLOGIES.clear()
    register(TOY)
    yield TOY
    TECHNOLOGIES.clear()
    TECHNOLOGIES.update(saved)
