"""The demo runs the beat's periodic tasks in its own process, as `celery beat` does in
production: without them a job at work whose wind reading ran out was never stopped there."""

import pytest

from compliance.management.commands.demo import run_due

SCHEDULE = {
    "wind": {"task": "compliance.tasks.stop_work_on_stale_weather", "schedule": 60},
    "renders": {"task": "compliance.tasks.render_missing_pdfs", "schedule": 600},
}


def test_each_task_runs_when_its_time_comes_and_not_before():
    ran: list[str] = []
    due: dict[str, float] = {}

    assert run_due(SCHEDULE, due, 0.0, ran.append) == []
    assert run_due(SCHEDULE, due, 59.0, ran.append) == []
    assert run_due(SCHEDULE, due, 60.0, ran.append) == ["wind"]
    assert run_due(SCHEDULE, due, 100.0, ran.append) == []
    assert run_due(SCHEDULE, due, 600.0, ran.append) == ["wind", "renders"]
    assert ran == [
        "compliance.tasks.stop_work_on_stale_weather",
        "compliance.tasks.stop_work_on_stale_weather",
        "compliance.tasks.render_missing_pdfs",
    ]


def test_a_task_that_fails_does_not_keep_the_others_from_running(caplog):
    def run(task):
        if task.endswith("stop_work_on_stale_weather"):
            raise RuntimeError("database is locked")
        return task

    due = {"wind": 0.0, "renders": 0.0}

    assert run_due(SCHEDULE, due, 0.0, run) == ["wind", "renders"]
    assert due == {"wind": 60.0, "renders": 600.0}
    assert "stop_work_on_stale_weather failed" in caplog.text


@pytest.mark.django_db
def test_the_beat_s_tasks_are_the_project_s_own_and_run_in_process(settings):
    from celery import current_app

    for entry in settings.CELERY_BEAT_SCHEDULE.values():
        assert entry["task"] in current_app.tasks
    assert (
        current_app.tasks["compliance.tasks.stop_work_on_stale_weather"].apply(throw=True).get()
        == 0
    )
