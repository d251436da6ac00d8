"""The audit trail, read directly."""

from __future__ import annotations

from ratebank.services.history import list_history
from ratebank.services.species import add_species


def test_newest_first_and_filtered(store):
    with store.session(write=True) as session:
        add_species(session, name="CH3OH", formula="CH3OH")
    with store.session() as session:
        every = list_history(session)
        newest = list_history(session, limit=1)
        by_tester = list_history(session, author="tester")
        about_file = list_history(session, target="command line")
        nobody = list_history(session, author="nobody")
    assert [e.action for e in every][-1] == "store.init"
    assert [(e.action, e.author, e.target) for e in newest] == [
        ("species.add", "tester", "command line")
    ]
    assert newest[0].detail == {"count": 1, "names": ["CH3OH"]}
    assert by_tester == about_file == newest
    assert nobody == []
    assert [e.at for e in every] == sorted((e.at for e in every), reverse=True)
