"""The public names of `qc` are what the package really exports."""

import qc


def test_every_public_name_resolves() -> None:
    for name in qc.__all__:
        assert getattr(qc, name) is not None, name


def test_unknown_name_is_an_attribute_error() -> None:
    try:
        qc.no_such_thing  # noqa: B018
    except AttributeError as exc:
        assert "no_such_thing" in str(exc)
    else:
        raise AssertionError("expected AttributeError")
