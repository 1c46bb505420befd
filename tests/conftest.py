import os
import sys

import pytest

sys.path.insert(0, os.path.dirname(__file__))

REAL_LINE = os.path.join(os.path.dirname(__file__), "..", "..", "shared", "data", "real", "penobscot_xl1155.sgy")


@pytest.fixture
def real_line_path():
    """The real marine line kept outside the repository (see its README for licence and attribution)."""
    if not os.path.exists(REAL_LINE):
        pytest.skip("real test line ../shared/data/real/penobscot_xl1155.sgy is absent")
    return os.path.abspath(REAL_LINE)
