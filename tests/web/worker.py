"""The service worker's script as the server sends it: without comments and spaces
(``webapp/shell``), so its lists are read and its code looked for spaces aside."""

from __future__ import annotations

import json
import re
from dataclasses import dataclass


@dataclass
class Worker:
    body: str
    shell: list[str]  # fetched when it installs
    pages: list[str]  # the pages it opens without the server

    def has(self, code: str) -> bool:
        """Whether the script holds ``code``, spaces aside (``'a !== "b"'`` is found as ``a!=="b"``)."""
        return re.sub(r"\s+", "", code) in re.sub(r"\s+", "", self.body)


def read_worker(client) -> Worker:
    with client.get("/sw.js") as response:
        assert response.status_code == 200
        body = response.get_data(as_text=True)
    shell = json.loads(re.search(r"const SHELL\s*=\s*(\[.*?\]);", body).group(1))
    pages = json.loads(re.search(r"const SHELL_PAGES\s*=\s*new Set\((\[.*?\])\);", body).group(1))
    return Worker(body, shell, pages)
