import pytest

from compare.thermo import phreeqc

requires_phreeqc = pytest.mark.skipif(not phreeqc.available(), reason="optional extra 'ions' (phreeqpython) missing")
