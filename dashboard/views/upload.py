"""Choosing a system file in the page: files over the size limit never leave the browser.

Panel's ``FileInput`` sends the whole chosen file, base64-encoded, in one
websocket message; a message over the server's limit (Bokeh's default
20 MiB, so a file of about 15 MiB) makes the server close the connection,
and the session dies without a word. :class:`SystemFileUpload` reads the
file's size in the browser first: a file of at most ``max_bytes`` is sent
(its base64 text in ``content``, its name in ``filename``), a larger one is
not read at all and only its name and size are sent (``refused``), so the
session stays alive and says why the file was not loaded.
"""

from __future__ import annotations

import base64
import binascii

import panel as pn
import param
from panel.reactive import ReactiveHTML


class SystemFileUpload(ReactiveHTML):
    """A file chooser that sends a file of at most ``max_bytes`` bytes, and only the name and size of a larger one.

    Watch ``upload`` (a tuple ``(file name, bytes)``, set when a file
    arrives) and ``oversize`` (a tuple ``(file name, size in bytes)``, set
    when a file was too large to send).
    """

    max_bytes = param.Integer(default=2 * 1024 * 1024, bounds=(1, None), doc="Largest file sent to the server [bytes]")
    accept = param.String(default=".toml", doc="File types offered by the browser's chooser")
    filename = param.String(default="", doc="Name of the file being sent (from the browser)")
    content = param.String(default="", doc="Base64 text of the file being sent (from the browser); emptied once read")
    refused = param.String(default="", doc="'count size name' of a file too large to send (from the browser)")
    upload = param.Parameter(default=None, doc="(file name, bytes) of the last file received")
    oversize = param.Parameter(default=None, doc="(file name, size) of the last file too large to send")

    _template = """<input type="file" id="chooser" accept="${accept}" style="width: 100%"
                          onchange="${script('choose')}"></input>"""

    _scripts = {
        "choose": """
            const file = chooser.files.length ? chooser.files[0] : null;
            chooser.value = "";  // so that choosing the same file again is seen
            if (file === null) {
                return;
            }
            if (file.size > data.max_bytes) {
                state.refusals = (state.refusals || 0) + 1;
                data.refused = `${state.refusals} ${file.size} ${file.name}`;
                return;
            }
            const reader = new FileReader();
            reader.onload = () => {
                const url = String(reader.result);
                data.filename = file.name;
                data.content = url.slice(url.indexOf(",") + 1);
            };
            reader.readAsDataURL(file);
        """,
    }

    _rename = {"upload": None, "oversize": None}

    @param.depends("content", watch=True)
    def _received(self) -> None:
        if not self.content:
            return
        try:
            data = base64.b64decode(self.content, validate=True)
        except (binascii.Error, ValueError):
            data = b""
        name = self.filename
        # emptied (here and in the browser, so that the same file may be sent again) once this change has been
        # handled: emptied from within this watcher, Panel would then send the browser the file's text back (the
        # event still being handled carries it), and choosing the same file again would change nothing there
        pn.state.execute(self._forget, schedule=True)
        if len(data) > self.max_bytes:  # a page that skipped the check in the browser
            self._announce("oversize", (name, len(data)))
        else:
            self._announce("upload", (name, data))

    def _forget(self) -> None:
        self.content = ""

    @param.depends("refused", watch=True)
    def _refused(self) -> None:
        count, _, rest = self.refused.partition(" ")
        size, _, name = rest.partition(" ")
        if count and size.isdigit():
            self._announce("oversize", (name, int(size)))

    def _announce(self, what: str, value) -> None:
        """Set ``what`` so that its watchers run even when the same file comes again."""
        with param.parameterized.discard_events(self):
            setattr(self, what, None)
        setattr(self, what, value)

    def receive(self, name: str, data: bytes) -> None:
        """Act as if the browser had sent ``data`` as the file ``name`` (for code and tests)."""
        if len(data) > self.max_bytes:
            self._announce("oversize", (name, len(data)))
        else:
            self.filename, self.content = name, base64.b64encode(data).decode("ascii")
