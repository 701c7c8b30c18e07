"""A DOCX whose main part is not a Word document body is refused with one line, not a traceback."""

import io
import zipfile

import pytest

from checker.core.errors import InputError
from checker.reading import read_document


def test_a_docx_whose_main_part_is_another_element_is_refused(tmp_path):
    from docx import Document  # python-docx writes the valid file we then change

    d = Document()
    d.add_paragraph("The test set holds 40 scans.")
    buf = io.BytesIO()
    d.save(buf)
    src = zipfile.ZipFile(io.BytesIO(buf.getvalue()))
    out = io.BytesIO()
    with zipfile.ZipFile(out, "w") as z:
        for info in src.infolist():
            data = src.read(info.filename)
            if info.filename == "word/document.xml":  # the root becomes another WordprocessingML element
                data = data.replace(b"<w:document", b"<w:settings", 1).replace(b"</w:document>", b"</w:settings>")
            z.writestr(info, data)
    path = tmp_path / "odd.docx"
    path.write_bytes(out.getvalue())
    with pytest.raises(InputError) as exc:
        read_document(path)
    assert "not a Word document body" in exc.value.line() and "\n" not in exc.value.line()
