"""The web process takes its start-up heap out of garbage collection (labdb.runtime).

Checked in a fresh interpreter: freezing is process-wide, and the test process must keep
collecting normally.
"""

import os
import subprocess
import sys
from pathlib import Path

ROOT = Path(__file__).resolve().parents[2]

PROBE = """
import gc, sys
assert gc.get_freeze_count() == 0
import labdb.wsgi  # the gunicorn entry point
# The views (and the services they import) were loaded before the freeze.
assert "labdb.web.views.search" in sys.modules and "labdb.search.parts" in sys.modules
print(gc.get_freeze_count())
"""


def test_importing_the_wsgi_entry_point_freezes_the_loaded_application():
    env = dict(os.environ, DJANGO_SETTINGS_MODULE="labdb.settings", SECRET_KEY="x", DEBUG="0")
    out = subprocess.run(
        [sys.executable, "-c", PROBE], cwd=ROOT, env=env, capture_output=True, text=True, check=True
    )
    # Django, the views, numpy and scipy: far more than 10^5 objects (common practice, no
    # source for the exact count; it was 4-5 × 10^5 here).
    assert int(out.stdout.strip()) > 100_000
