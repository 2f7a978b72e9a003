"""`saltbench params`: the published sets carry their source, marking and authors' constant."""

import json


def test_params_lists_published_sets_with_marking(seeded_store, run_main):
    code, out, err = run_main("params", "--format", "json", store=seeded_store)
    assert code == 0, err
    sets = {r["set_id"]: r for r in json.loads(out)}
    pm = sets["pitzer-mayorga-1973"]
    # Pitzer and Mayorga (1973) fitted with A_phi = 0.392 (from memory of that paper)
    assert pm["model"] == "pitzer" and pm["a_phi"] == 0.392 and pm["kind"] == "published"
    assert isinstance(pm["from_memory"], bool)


def test_params_show_one_set(seeded_store, run_main):
    code, out, err = run_main("params", "pitzer-mayorga-1973", "--format", "json", store=seeded_store)
    assert code == 0, err
    doc = json.loads(out)
    nacl = {v["name"]: v["value"] for v in doc["values"] if v["target"] == "NaCl"}
    assert set(nacl) == {"beta0", "beta1", "C_phi"}
    assert "Pitzer" in doc["citation"]
    code, _, err = run_main("params", "no-such-set", store=seeded_store)
    assert code == 2 and err.startswith("Error: no parameter set 'no-such-set'")


def test_params_says_where_in_temperature_each_set_holds(seeded_store, run_main):
    # the ranges are the files' own headers: refdata/parameters/silvester-pitzer-1977.csv gives a
    # reference expansion over 0-50 °C; pitzer-mayorga-1973.csv holds at 25 °C only
    code, out, err = run_main("params", store=seeded_store)
    assert code == 0, err
    rows = {line.split()[0]: line for line in out.splitlines()[2:] if line.strip()}
    assert "0-50 °C (reference-expansion)" in rows["silvester-pitzer-1977"]
    assert "25 °C only" in rows["pitzer-mayorga-1973"]
    code, out, err = run_main("params", "--format", "json", store=seeded_store)
    doc = {r["set_id"]: r for r in json.loads(out)}
    assert (doc["silvester-pitzer-1977"]["t_min_k"], doc["silvester-pitzer-1977"]["t_max_k"]) == (273.15, 323.15)
    assert doc["pitzer-mayorga-1973"]["t_min_k"] is None and doc["pitzer-mayorga-1973"]["temperature_k"] == 298.15
