"""Bad input raises the ClampwiseError subclass of the CLI's exit code, carrying the CLI's
located message ([practice] the CLI's stderr is the reference text)."""

import pytest

import clampwise as cw
from conftest import BRAKE, run_cli


def test_bad_cell_is_located_as_the_cli_locates_it(brake_trace, workdir):
    lines = open(brake_trace, encoding="utf-8").read().splitlines()
    header_at = next(i for i, l in enumerate(lines) if not l.startswith("#"))
    header = lines[header_at].split(",")
    col = header.index("omega_in_rad_s")
    bad_at = header_at + 50
    cells = lines[bad_at].split(",")
    cells[col] = "fast"
    lines[bad_at] = ",".join(cells)
    bad = workdir / "bad-cell.csv"
    bad.write_text("\n".join(lines) + "\n", encoding="utf-8")
    code, _, err = run_cli("replay", "-q", "-c", BRAKE, bad, "-o", workdir / "bad.estimate.csv", check=False)
    assert code == 2
    with pytest.raises(cw.DataError) as e:
        cw.replay(BRAKE, bad)
    assert e.value.line == bad_at + 1
    assert e.value.column == col + 1
    assert e.value.header == "omega_in_rad_s"
    assert e.value.exit_code == 2 and e.value.kind == "data"
    assert str(e.value) in err
    assert f":{bad_at + 1}:{col + 1}:" in str(e.value)
    with pytest.raises(cw.DataError):
        cw.read_trace(BRAKE, bad)
    skipped = cw.replay(BRAKE, bad, skip_bad_rows=True)
    assert skipped.attrs["summary"]["skipped"]["count"] == 1


def test_bad_config_names_its_key(workdir):
    text = open(BRAKE, encoding="utf-8").read()
    assert "sample_period_s" in text
    broken = workdir / "broken.toml"
    out = []
    for line in text.splitlines():
        if line.strip().startswith("sample_period_s"):
            line = "sample_period_s = -1.0"
        out.append(line)
    broken.write_text("\n".join(out) + "\n", encoding="utf-8")
    code, _, err = run_cli("check", broken, check=False)
    assert code == 1
    with pytest.raises(cw.ConfigError) as e:
        cw.Estimator(broken)
    assert e.value.exit_code == 1
    keys = [i["key"] for i in e.value.issues]
    assert any(k and k.endswith("sample_period_s") for k in keys), e.value.issues
    assert any(i["line"] for i in e.value.issues)
    with pytest.raises(cw.ConfigError) as e2:
        cw.replay(broken, "whatever.csv")
    assert str(e2.value) == str(e.value)


def test_missing_file_and_bad_option():
    with pytest.raises(cw.ClampwiseIOError) as e:
        cw.replay(BRAKE, "no-such-trace.csv")
    assert e.value.exit_code == 4 and "no-such-trace.csv" in str(e.value)
    with pytest.raises(cw.UsageError, match="resample"):
        cw.replay(BRAKE, "x.csv", resample="cubic")
    with pytest.raises(cw.ClampwiseError):
        cw.synth(BRAKE, "x.csv", scenario="no-such-scenario")
