//! How cached plans are served: gzip bodies kept beside the plain ones and
//! sent as they are, concurrent first reads of a new version computed once
//! and answered alike, and a write seen by the very next read.

use std::io::Read;

use reqwest::Method;
use serde_json::json;

use crate::helpers::*;

const MONDAY: &str = "2027-01-04";

#[tokio::test]
async fn a_gzip_read_of_a_cached_plan_is_the_plain_body_compressed_under_the_same_etag() {
    let app = spawn_app().await;
    let team = app.team("Serving squad").await;
    app.athlete(team, "Test Player").await;
    app.session(team, MONDAY).await;
    let path = format!("/v1/teams/{team}/plan/summary?from={MONDAY}");
    let plain = app.get(&path, &app.admin).await;
    assert_eq!(plain.status(), 200);
    let etag = etag_of(&plain);
    let plain = plain.bytes().await.unwrap();
    for _ in 0..2 {
        // The first makes the gzip body from the cached plain one, the second reuses it.
        let zipped = app
            .req(Method::GET, &path, Some(&app.admin))
            .header("accept-encoding", "gzip")
            .send()
            .await
            .unwrap();
        assert_eq!(zipped.status(), 200);
        assert_eq!(zipped.headers()["content-encoding"], "gzip");
        assert_eq!(zipped.headers()["vary"], "accept-encoding");
        assert_eq!(etag_of(&zipped), etag);
        let bytes = zipped.bytes().await.unwrap();
        let mut unpacked = Vec::new();
        flate2::read::GzDecoder::new(&bytes[..])
            .read_to_end(&mut unpacked)
            .unwrap();
        assert_eq!(unpacked, plain, "the same plan, byte for byte");
    }
}

#[tokio::test]
async fn concurrent_first_reads_after_a_write_get_the_same_new_plan() {
    let app = spawn_app().await;
    let team = app.team("Serving squad").await;
    for n in 0..3 {
        app.athlete(team, &format!("Player {n}")).await;
    }
    let session = app.session(team, MONDAY).await;
    let path = format!("/v1/teams/{team}/plan/summary?from={MONDAY}");
    let before = etag_of(&app.get(&path, &app.admin).await);
    let moved = app
        .patch(
            &format!("/v1/sessions/{session}"),
            &app.admin,
            &json!({"start_time": "16:00"}),
            None,
        )
        .await;
    assert_eq!(moved.status(), 200);
    let reads = (0..8).map(|_| async {
        let res = app.get(&path, &app.admin).await;
        assert_eq!(res.status(), 200);
        (etag_of(&res), res.bytes().await.unwrap())
    });
    let answers = futures_join_all(reads).await;
    let (etag, body) = &answers[0];
    assert_ne!(etag, &before, "the write is seen by the very next read");
    for (other_etag, other_body) in &answers[1..] {
        assert_eq!(other_etag, etag);
        assert_eq!(other_body, body);
    }
}

/// Runs futures concurrently on this task (no extra dependency).
async fn futures_join_all<F: std::future::Future>(
    futures: impl Iterator<Item = F>,
) -> Vec<F::Output> {
    let handles: Vec<_> = futures.map(Box::pin).collect();
    let mut out = Vec::with_capacity(handles.len());
    let mut pending: Vec<_> = handles.into_iter().map(Some).collect();
    let mut results: Vec<Option<F::Output>> = (0..pending.len()).map(|_| None).collect();
    std::future::poll_fn(|cx| {
        let mut done = true;
        for (slot, result) in pending.iter_mut().zip(results.iter_mut()) {
            if let Some(future) = slot {
                match future.as_mut().poll(cx) {
                    std::task::Poll::Ready(value) => {
                        *result = Some(value);
                        *slot = None;
                    }
                    std::task::Poll::Pending => done = false,
                }
            }
        }
        if done {
            std::task::Poll::Ready(())
        } else {
            std::task::Poll::Pending
        }
    })
    .await;
    out.extend(results.into_iter().map(|r| r.expect("ready")));
    out
}
