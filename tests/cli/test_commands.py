"""Every command is a thin call of one method of the library's front door (ratebank.api)."""

from __future__ import annotations

import pytest
from helpers.cli import run
from typer.main import get_command

from ratebank import api
from ratebank.api import Store
from ratebank.cli.app import app
from ratebank.errors import RatebankError


class _Called(RatebankError):
    """Raised by a stand-in method, to show the command reached it."""


def _commands() -> list[tuple[list[str], object]]:
    found = []

    def walk(command, path: list[str]) -> None:
        sub = getattr(command, "commands", None)
        if sub:
            for name, child in sub.items():
                walk(child, [*path, name])
        else:
            found.append((path, command))

    walk(get_command(app), [])
    return found


COMMANDS = _commands()


def _method(command) -> str:
    return getattr(command.callback, "__ratebank_calls__", "")


def _owner(method: str) -> tuple[object, str]:
    """(where the call lives, its name): ``api.X`` is a module function, else a Store method."""
    if method.startswith("api."):
        return api, method[len("api.") :]
    return Store, method


def _dummy(param, folder) -> list[str]:
    """Text for a required argument or option, good enough to reach the library call."""
    annotation = str(param.type_descriptor.annotation)
    value = "1" if "int" in annotation else "300" if "float" in annotation else "x"
    if "Path" in annotation or param.name in ("file", "out"):
        value = str(folder / "x.csv")
    if param.name == "species_tables":
        value = "OH=H-038"
    if param.param_type_name == "option":
        return [param.opts[0], value]
    return [value]


@pytest.mark.parametrize(("path", "command"), COMMANDS, ids=[" ".join(p) for p, _ in COMMANDS])
def test_every_command_names_the_library_method_it_calls(path, command):
    method = _method(command)
    assert method, f"`ratebank {' '.join(path)}` declares no ratebank.api method (@calls)"
    owner, name = _owner(method)
    assert callable(getattr(owner, name, None)), method


@pytest.mark.parametrize(("path", "command"), COMMANDS, ids=[" ".join(p) for p, _ in COMMANDS])
def test_every_command_makes_exactly_that_call(path, command, sqlite_url, tmp_path, monkeypatch):
    assert run(sqlite_url, "init").exit_code == 0
    method = _method(command)
    made = []

    def stand_in(*args, **kwargs):
        made.append(method)
        raise _Called("reached")

    monkeypatch.setattr(*_owner(method), stand_in)
    arguments = [
        text
        for param in command.params
        if getattr(param, "required", False)
        for text in _dummy(param, tmp_path)
    ]
    outcome = run(sqlite_url, *path, *arguments)
    assert made == [method], (path, outcome.stderr)
    assert outcome.stderr.strip() == "Error: reached"


def test_the_command_table_names_each_command_with_the_module_that_attaches_it():
    from ratebank.cli.app import COMMANDS, command_named, names_attached

    names = [name for name, _ in COMMANDS]
    assert len(names) == len(set(names))
    modules = {module for _, module in COMMANDS if module is not None}
    attached = {name: module for module in modules for name in names_attached(module)}
    assert {name: attached.get(name) for name, module in COMMANDS if module} == {
        name: module for name, module in COMMANDS if module
    }
    # a command a module attaches but the table leaves out could never be run
    assert set(attached) <= set(names)
    assert all(command_named(module, name).name == name for name, module in attached.items())
