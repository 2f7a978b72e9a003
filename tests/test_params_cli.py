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
