"""The README's bench-script example runs, as written, against a live test server."""

import contextlib
import io
import re
from pathlib import Path

import pytest

README = Path(__file__).resolve().parents[2] / "README.md"


def readme_example() -> str:
    text = README.read_text(encoding="utf-8")
    match = re.search(
        r"<!-- bench-script:start -->\s*```python\n(.*?)```\s*<!-- bench-script:end -->",
        text,
        re.S,
    )
    assert match, "README.md lost its bench-script example markers"
    return match.group(1)


@pytest.mark.django_db(transaction=True)
def test_the_readme_bench_script_posts_reads_and_fetches_a_card(
    live_server, member, monkeypatch, tmp_path
):
    from labdb.api.tokens import mint_token
    from labdb.catalog.models import Part
    from labdb.measurements.models import Fixture, Sweep

    # The names the example uses are the demo lab's (fixtures/demo/catalog.json).
    Part.objects.create(part_number="QSV-3052", kind="varactor", rated_reverse_v=30.0)
    Fixture.objects.create(name="Wren meter jig", kind="meter", test_frequency_hz=1e6)
    _, key = mint_token(member, "write", name="readme")
    monkeypatch.setenv("LABDB_URL", live_server.url)
    monkeypatch.setenv("LABDB_TOKEN", key)
    monkeypatch.chdir(tmp_path)

    out = io.StringIO()
    with contextlib.redirect_stdout(out):
        exec(compile(readme_example(), "README.md", "exec"), {"__name__": "__main__"})

    sweep = Sweep.objects.get(unit__label="U07", unit__lot__code="API-1")
    fit = sweep.current_fit
    # The example's points follow C = 48 pF·(1 + V/0.75)^(−0.52), written to 5 decimals.
    assert fit.cjo == pytest.approx(48e-12, rel=1e-4)
    assert fit.vj == pytest.approx(0.75, rel=1e-3)
    assert fit.m == pytest.approx(0.52, rel=1e-3)
    printed = out.getvalue()
    assert f"sweep {sweep.pk} duplicate: False" in printed
    assert "CJO = 48.00 pF" in printed
    card = (tmp_path / "QSV-3052_U07.lib").read_text()
    assert ".model QSV_3052_API_1_U07_V1 D(" in card
