"""Upload and archive limits from settings."""

from django.conf import settings

from labdb.ingest import ArchiveLimits


def archive_limits() -> ArchiveLimits:
    return ArchiveLimits(
        max_members=settings.ARCHIVE_MAX_MEMBERS,
        max_total_bytes=settings.ARCHIVE_MAX_TOTAL_BYTES,
        max_ratio=settings.ARCHIVE_MAX_RATIO,
        max_member_bytes=settings.UPLOAD_MAX_BYTES,
    )
