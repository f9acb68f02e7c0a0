"""Hostile uploads through the batch page: ten zip bombs at once are refused with the limit named, and the service
answers /healthz meanwhile."""
from __future__ import annotations

import threading

from hostile_files import zip_bomb
from web_helpers import sign_in

from jtcheck.records.models import Role


def test_ten_zip_bombs_at_once_are_refused_and_healthz_answers(app, world):
    boundary = b"jtcheck-hostile"
    # the multipart body is made here: Werkzeug's test client leaves its own spooled body file open for large files
    body = (b"--" + boundary + b'\r\nContent-Disposition: form-data; name="file"; filename="bomb.xlsx"\r\n'
            b"Content-Type: application/octet-stream\r\n\r\n" + zip_bomb() + b"\r\n--" + boundary + b"--\r\n")
    answers: list[tuple[int, str]] = []
    health: list[int] = []
    done = threading.Event()

    def upload() -> None:
        c = app.test_client()
        sign_in(c, world.emails[Role.ENGINEER])
        resp = c.post("/batches", data=body, content_type=f"multipart/form-data; boundary={boundary.decode()}")
        answers.append((resp.status_code, resp.data.decode()))

    def probe() -> None:
        c = app.test_client()
        while not done.is_set():
            health.append(c.get("/healthz").status_code)

    watcher = threading.Thread(target=probe)
    watcher.start()
    threads = [threading.Thread(target=upload) for _ in range(10)]
    for t in threads:
        t.start()
    for t in threads:
        t.join(120)
    done.set()
    watcher.join(10)
    assert len(answers) == 10
    for status, page in answers:
        assert status == 422 and "at most 256 MB unpacked is read" in page
    assert health and set(health) == {200}
