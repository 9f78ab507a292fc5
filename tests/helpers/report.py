"""Figures a test module prints at its end (the largest deviations from ngspice, for the notes)."""

from __future__ import annotations


def report_lines(request, lines: list[str]) -> None:
    """Write `lines` to the terminal past pytest's output capture (plain print when run without it)."""
    reporter = request.config.pluginmanager.get_plugin("terminalreporter")
    capture = request.config.pluginmanager.getplugin("capturemanager")
    if reporter is None or capture is None:
        print("\n".join(lines))
        return
    with capture.global_and_fixture_disabled():
        reporter.write_line("")
        for line in lines:
            reporter.write_line(line)
