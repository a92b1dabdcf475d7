"""The index from model id to its checks (tests/INDEX.md, from the tests' markers)."""

import index


def test_the_index_is_current():
    # after adding or marking a test: python tests/index.py
    assert index.INDEX.read_text() == index.render()


def test_every_marker_names_a_model_of_the_catalogue():
    models = index.catalogue_models()
    for marker, tests in index.markers().items():
        named = index.resolve(marker, models)
        assert named, f"{marker!r} (in {tests[0]}) names no model file"
        assert "/" in marker or len(named) == 1, f"{marker!r} is ambiguous: {named}"


def test_every_model_has_a_check():
    # a model file without a marked check fails here (mark its outside test with
    # @pytest.mark.model("quantity/model-id"))
    assert [m for m, tests in index.checks().items() if not tests] == []


def test_every_quantity_has_an_outside_check():
    quantities = {}
    for model, tests in index.checks().items():
        quantity = model.partition("/")[0]
        quantities.setdefault(quantity, False)
        quantities[quantity] |= any(t.startswith("outside/") for t in tests)
    assert [q for q, checked in quantities.items() if not checked] == []
