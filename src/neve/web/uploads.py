"""A portfolio upload, streamed straight into its job's folder and size-limited.

The multipart body is parsed as it arrives (python-multipart's streaming
parser), so the site file is written only to the job's own folder, under a
name neve chooses (``sites.<suffix>``); the name the browser sends is kept as
text, never used as a path.  A body larger than the server's limit is
refused (413) and what was written of it is removed.
"""

from __future__ import annotations

from pathlib import Path, PurePosixPath, PureWindowsPath

from neve.engine.errors import InputError

#: the site-file formats a portfolio upload may be (``neve screen`` reads them)
SITE_SUFFIXES = (".csv", ".xlsx", ".gpkg", ".parquet")

#: the largest text field of a multipart request [bytes]
FIELD_LIMIT = 256 * 1024


class TooLarge(InputError):
    """The request body is larger than the server takes (answered 413)."""


def upload_suffix(file_name: str) -> str:
    """The site-file suffix of an uploaded file's name (refused unless one neve reads)."""
    name = PureWindowsPath(PurePosixPath(file_name).name).name  # the last part, either way
    suffix = Path(name).suffix.lower()
    if suffix not in SITE_SUFFIXES:
        raise InputError(
            "sites", f"{file_name!r} is not a site file neve reads", ", ".join(SITE_SUFFIXES)
        )
    return suffix


class MultipartSink:
    """Callbacks of :class:`python_multipart.multipart.MultipartParser`: text fields kept
    in memory, the one file part (``file_field``) written to a temporary file in ``folder``."""

    def __init__(self, folder: Path, file_field: str = "sites"):
        self.folder = folder
        self.file_field = file_field
        self.fields: dict[str, str] = {}
        self.file_name: str | None = None
        self.file_path: Path | None = None
        self._header_field = b""
        self._header_value = b""
        self._headers: dict[bytes, bytes] = {}
        self._name: str | None = None
        self._buffer: bytearray | None = None
        self._out = None

    def callbacks(self) -> dict:
        return {
            "on_part_begin": self._part_begin,
            "on_part_data": self._part_data,
            "on_part_end": self._part_end,
            "on_header_field": self._hfield,
            "on_header_value": self._hvalue,
            "on_header_end": self._hend,
            "on_headers_finished": self._headers_done,
        }

    def _part_begin(self):
        self._headers, self._name, self._buffer, self._out = {}, None, None, None

    def _hfield(self, data, start, end):
        self._header_field += data[start:end]

    def _hvalue(self, data, start, end):
        self._header_value += data[start:end]

    def _hend(self):
        self._headers[self._header_field.lower()] = self._header_value
        self._header_field, self._header_value = b"", b""

    def _headers_done(self):
        from python_multipart.multipart import parse_options_header

        _, params = parse_options_header(self._headers.get(b"content-disposition", b""))
        name = params.get(b"name", b"").decode("utf-8", "replace")
        self._name = name
        if b"filename" in params:
            if name != self.file_field or self._out is not None or self.file_path is not None:
                raise InputError(
                    name or "file", "an unexpected file", f"one file, {self.file_field}"
                )
            self.file_name = params[b"filename"].decode("utf-8", "replace")
            upload_suffix(self.file_name)  # refused before a byte is written
            from neve import safe_write

            tmp = safe_write.make_temp(self.folder / "sites.upload", "part", folder=False)
            self.file_path = tmp  # published under neve's own name when the upload is whole
            self._out = open(tmp, "wb")  # noqa: SIM115 (closed at the part's end)
        else:
            self._buffer = bytearray()

    def _part_data(self, data, start, end):
        if self._out is not None:
            self._out.write(data[start:end])
        elif self._buffer is not None:
            self._buffer += data[start:end]
            if len(self._buffer) > FIELD_LIMIT:
                raise TooLarge(self._name or "field", "longer than 256 KiB", "a shorter value")

    def _part_end(self):
        if self._out is not None:
            self._out.close()
            self._out = None
        elif self._buffer is not None and self._name:
            if self._name in self.fields:
                raise InputError(self._name, "given twice", "one value")
            self.fields[self._name] = self._buffer.decode("utf-8", "replace")
        self._buffer = None

    def close(self):
        if self._out is not None:
            self._out.close()
            self._out = None


async def receive_upload(request, folder: Path, limit: int) -> MultipartSink:
    """Parse a ``multipart/form-data`` request into ``folder`` (at most ``limit`` bytes)."""
    from python_multipart.multipart import MultipartParser, parse_options_header

    ctype, params = parse_options_header(request.headers.get("content-type", ""))
    if ctype != b"multipart/form-data" or b"boundary" not in params:
        raise InputError(
            "content-type", "not multipart/form-data", "a form upload (multipart/form-data)"
        )
    declared = request.headers.get("content-length")
    if declared and declared.isdigit() and int(declared) > limit:
        raise TooLarge("sites", f"the upload is larger than {limit // (1024 * 1024)} MB",
                       "a smaller site file (neve serve --max-upload-mb)")  # fmt: skip
    sink = MultipartSink(folder)
    parser = MultipartParser(params[b"boundary"], sink.callbacks())
    total = 0
    try:
        async for chunk in request.stream():
            total += len(chunk)
            if total > limit:
                raise TooLarge("sites", f"the upload is larger than {limit // (1024 * 1024)} MB",
                               "a smaller site file (neve serve --max-upload-mb)")  # fmt: skip
            parser.write(chunk)
        parser.finalize()
    finally:
        sink.close()
    return sink
