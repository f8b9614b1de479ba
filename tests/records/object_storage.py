"""A storage backend with no local files, as object storage is: `.path()` is not there."""

from django.core.files.base import ContentFile, File
from django.core.files.storage import Storage
from django.utils import timezone
from django.utils.deconstruct import deconstructible


@deconstructible
class ObjectStorage(Storage):
    """Files kept in a dict by name; `path()` is Storage's own, which raises."""

    def __init__(self) -> None:
        self.files: dict[str, tuple[bytes, object]] = {}

    def _open(self, name: str, mode: str = "rb") -> File:
        if name not in self.files:
            raise FileNotFoundError(name)
        return ContentFile(self.files[name][0], name=name)

    def _save(self, name: str, content: File) -> str:
        content.seek(0)
        data = content.read()
        self.files[name] = (data.encode() if isinstance(data, str) else data, timezone.now())
        return name

    def exists(self, name: str) -> bool:
        return name in self.files

    def delete(self, name: str) -> None:
        self.files.pop(name, None)

    def size(self, name: str) -> int:
        return len(self.files[name][0])

    def url(self, name: str) -> str:
        return f"https://objects.invalid/{name}"

    def listdir(self, path: str) -> tuple[list[str], list[str]]:
        prefix = f"{path.rstrip('/')}/" if path else ""
        below = [n[len(prefix) :] for n in self.files if n.startswith(prefix)]
        return sorted({n.split("/")[0] for n in below if "/" in n}), sorted(
            n for n in below if "/" not in n
        )

    def get_modified_time(self, name: str):
        return self.files[name][1]


def use_object_storage(settings) -> None:
    """Point the default storage (photos and record PDFs) at a fresh ObjectStorage."""
    settings.STORAGES = {
        **settings.STORAGES,
        "default": {"BACKEND": "tests.records.object_storage.ObjectStorage"},
    }
