"""The README's example outputs are what the code prints: every `steamcell get ... # value` line
of the repository README runs against the binary and prints that value, and the quick-start
banner has the documented form."""

import re
import subprocess

from conftest import REPO


def test_readme_get_lines_print_their_values(binary):
    text = (REPO / "README.md").read_text()
    lines = re.findall(r"^steamcell get (.+?)\s+#\s*(\S+)\s*$", text, flags=re.M)
    assert len(lines) >= 2
    for args, want in lines:
        out = subprocess.run([binary, "get", *args.split()], capture_output=True, text=True,
                             timeout=30)
        assert out.returncode == 0, out.stderr
        assert out.stdout.strip() == want, (args, out.stdout)


def test_readme_banner_is_what_serve_prints(client):
    text = (REPO / "README.md").read_text()
    doc = re.search(r"^# (steamcell \S+ listening on .*)$", text, flags=re.M).group(1)
    pattern = re.escape(doc).replace(re.escape("127.0.0.1:8790"), r"127\.0\.0\.1:\d+")
    assert re.fullmatch(pattern, client.banner), (doc, client.banner)
