//! Sign-in sessions of the squad board. The cookie carries a random secret;
//! only its SHA-256 is stored, so a copy of the database cannot be replayed
//! as a session. A session is only as alive as its API token: revoking the
//! token ends every session made from it on the next request.

use chrono::{DateTime, Utc};
use rand::RngCore;
use sha2::{Digest, Sha256};
use tracing::instrument;
use uuid::Uuid;

use super::{Db, instant_text, label, now_text};
use crate::domain::token::Role;

/// Who a live session acts for: its token's id, role and team.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct SessionOwner {
    pub token_id: Uuid,
    pub role: Role,
    pub team_id: Option<Uuid>,
}

pub fn hash_secret(secret: &str) -> Vec<u8> {
    Sha256::digest(secret.as_bytes()).to_vec()
}

/// A new cookie secret: 256 random bits, hex.
pub fn new_secret() -> String {
    let mut bytes = [0u8; 32];
    rand::rng().fill_bytes(&mut bytes);
    hex::encode(bytes)
}

/// Stores a session for `token_id` until `expires_at` and returns its
/// secret (for the cookie). Expired sessions are swept in the same write.
#[instrument(skip_all)]
pub async fn create(
    db: &Db,
    token_id: Uuid,
    expires_at: DateTime<Utc>,
) -> Result<String, sqlx::Error> {
    let secret = new_secret();
    let hash = hash_secret(&secret);
    let token = token_id.to_string();
    let now = now_text();
    let expires = instant_text(expires_at);
    let mut tx = db.begin_write().await?;
    sqlx::query!("DELETE FROM board_sessions WHERE expires_at <= ?", now)
        .execute(&mut *tx)
        .await?;
    sqlx::query!(
        "INSERT INTO board_sessions (secret_hash, token_id, created_at, expires_at) VALUES (?, ?, ?, ?)",
        hash,
        token,
        now,
        expires
    )
    .execute(&mut *tx)
    .await?;
    tx.commit().await?;
    Ok(secret)
}

struct OwnerRow {
    id: String,
    role: String,
    team_id: Option<String>,
}

/// The owner of the live session with this secret: not expired, and its
/// token not revoked.
#[instrument(skip_all)]
pub async fn owner(db: &Db, secret: &str) -> Result<Option<SessionOwner>, sqlx::Error> {
    let hash = hash_secret(secret);
    let now = now_text();
    sqlx::query_as!(
        OwnerRow,
        "SELECT t.id, t.role, t.team_id FROM board_sessions s JOIN api_tokens t ON t.id = s.token_id
         WHERE s.secret_hash = ? AND s.expires_at > ? AND t.revoked_at IS NULL",
        hash,
        now
    )
    .fetch_optional(&db.read)
    .await?
    .map(|row| {
        Ok(SessionOwner {
            token_id: super::uuid(&row.id)?,
            role: label(&row.role)?,
            team_id: row.team_id.as_deref().map(super::uuid).transpose()?,
        })
    })
    .transpose()
}

/// Ends the session with this secret (sign-out); ending it twice is harmless.
#[instrument(skip_all)]
pub async fn delete(db: &Db, secret: &str) -> Result<(), sqlx::Error> {
    let hash = hash_secret(secret);
    let mut tx = db.begin_write().await?;
    sqlx::query!("DELETE FROM board_sessions WHERE secret_hash = ?", hash)
        .execute(&mut *tx)
        .await?;
    tx.commit().await?;
    Ok(())
}
