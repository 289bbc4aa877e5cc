"""Test-wide guards: no network, astropy offline."""

import socket

import pytest


class NetworkBlocked(RuntimeError):
    pass


@pytest.fixture(autouse=True)
def _no_network(monkeypatch):
    """Every test runs with outbound sockets refused (nav must never touch the network)."""

    def refuse(*args, **kwargs):
        raise NetworkBlocked("network access attempted during a test")

    monkeypatch.setattr(socket.socket, "connect", refuse)
    monkeypatch.setattr(socket.socket, "connect_ex", refuse)
    monkeypatch.setattr(socket, "create_connection", refuse)
    monkeypatch.setattr(socket, "getaddrinfo", refuse)


def pytest_configure(config):
    try:
        from astropy.utils import iers
        from astropy.utils.data import conf as data_conf
    except ImportError:  # astropy is in the test extra; tests that need it import it themselves
        return
    iers.conf.auto_download = False
    iers.conf.auto_max_age = None
    data_conf.allow_internet = False
