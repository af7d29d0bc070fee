//! API tokens. Only the SHA-256 of a secret is stored; the secret is shown
//! once, when created.

use rand::RngCore;
use sha2::{Digest, Sha256};
use tracing::instrument;
use uuid::Uuid;

use super::audit::{self, Action, Actor, Entry};
use super::{Db, Write, label, now_text, parse_instant};
use crate::domain::label_of;
use crate::domain::token::{CreatedToken, Role, TokenInfo, TokenInput};

/// Secrets start with a fixed prefix so they are easy to spot in a leak scan.
pub const SECRET_PREFIX: &str = "gwk_";

pub fn hash_secret(secret: &str) -> Vec<u8> {
    Sha256::digest(secret.as_bytes()).to_vec()
}

fn new_secret() -> String {
    let mut bytes = [0u8; 32];
    rand::rng().fill_bytes(&mut bytes);
    format!("{SECRET_PREFIX}{}", hex::encode(bytes))
}

struct TokenRow {
    id: String,
    label: String,
    role: String,
    team_id: Option<String>,
    created_at: String,
    revoked_at: Option<String>,
}

impl TokenRow {
    fn into_info(self) -> Result<TokenInfo, sqlx::Error> {
        Ok(TokenInfo {
            id: super::uuid(&self.id)?,
            label: self.label,
            role: label(&self.role)?,
            team_id: self.team_id.as_deref().map(super::uuid).transpose()?,
            created_at: parse_instant(&self.created_at)?,
            revoked_at: self.revoked_at.as_deref().map(parse_instant).transpose()?,
        })
    }
}

#[instrument(skip_all)]
pub async fn create(
    db: &Db,
    actor: Actor,
    input: &TokenInput,
) -> Result<CreatedToken, sqlx::Error> {
    let id = Uuid::now_v7();
    let id_text = id.to_string();
    let secret = new_secret();
    let hash = hash_secret(&secret);
    let role = label_of(&input.role);
    let team = input.team_id.map(|t| t.to_string());
    let now = now_text();
    let mut tx = db.begin_write().await?;
    sqlx::query!(
        "INSERT INTO api_tokens (id, label, role, team_id, token_hash, created_at) VALUES (?, ?, ?, ?, ?, ?)",
        id_text,
        input.label,
        role,
        team,
        hash,
        now
    )
    .execute(&mut *tx)
    .await?;
    let info = fetch_in(&mut tx, id)
        .await?
        .ok_or(sqlx::Error::RowNotFound)?;
    audit::record(
        &mut tx,
        actor,
        Entry {
            team_id: input.team_id,
            action: Action::Create,
            entity_type: "token",
            entity_id: id_text,
            before: None,
            after: Some(serde_json::to_value(&info).unwrap_or_default()),
        },
    )
    .await?;
    tx.commit().await?;
    Ok(CreatedToken { info, secret })
}

async fn fetch_in(
    conn: &mut sqlx::SqliteConnection,
    id: Uuid,
) -> Result<Option<TokenInfo>, sqlx::Error> {
    let id = id.to_string();
    sqlx::query_as!(
        TokenRow,
        "SELECT id, label, role, team_id, created_at, revoked_at FROM api_tokens WHERE id = ?",
        id
    )
    .fetch_optional(conn)
    .await?
    .map(TokenRow::into_info)
    .transpose()
}

#[instrument(skip_all)]
pub async fn get(db: &Db, id: Uuid) -> Result<Option<TokenInfo>, sqlx::Error> {
    let mut conn = db.read.acquire().await?;
    fetch_in(&mut conn, id).await
}

/// The live (not revoked) token with this secret, if any.
#[instrument(skip_all)]
pub async fn authenticate(db: &Db, secret: &str) -> Result<Option<TokenInfo>, sqlx::Error> {
    let hash = hash_secret(secret);
    if let Some(info) = db.memo.token(&hash) {
        return Ok(info);
    }
    let ticket = db.memo.ticket();
    let info = sqlx::query_as!(
        TokenRow,
        "SELECT id, label, role, team_id, created_at, revoked_at FROM api_tokens
         WHERE token_hash = ? AND revoked_at IS NULL",
        hash
    )
    .fetch_optional(&db.read)
    .await?
    .map(TokenRow::into_info)
    .transpose()?;
    db.memo.put_token(ticket, hash, info.clone());
    Ok(info)
}

#[instrument(skip_all)]
pub async fn list(
    db: &Db,
    team: Option<Uuid>,
    after: Option<Uuid>,
    limit: u32,
) -> Result<Vec<TokenInfo>, sqlx::Error> {
    let team = team.map(|t| t.to_string());
    let after = after.map(|t| t.to_string()).unwrap_or_default();
    let limit = i64::from(limit) + 1;
    sqlx::query_as!(
        TokenRow,
        "SELECT id, label, role, team_id, created_at, revoked_at FROM api_tokens
         WHERE id > ? AND (? IS NULL OR team_id = ?) ORDER BY id LIMIT ?",
        after,
        team,
        team,
        limit
    )
    .fetch_all(&db.read)
    .await?
    .into_iter()
    .map(TokenRow::into_info)
    .collect()
}

/// Revokes a token at once; revoking twice is harmless.
#[instrument(skip_all)]
pub async fn revoke(db: &Db, actor: Actor, id: Uuid) -> Result<Write<TokenInfo>, sqlx::Error> {
    let mut tx = db.begin_write().await?;
    let Some(before) = fetch_in(&mut tx, id).await? else {
        return Ok(Write::NotFound);
    };
    let id_text = id.to_string();
    let now = now_text();
    sqlx::query!(
        "UPDATE api_tokens SET revoked_at = COALESCE(revoked_at, ?) WHERE id = ?",
        now,
        id_text
    )
    .execute(&mut *tx)
    .await?;
    let after = fetch_in(&mut tx, id)
        .await?
        .ok_or(sqlx::Error::RowNotFound)?;
    audit::record(
        &mut tx,
        actor,
        Entry {
            team_id: before.team_id,
            action: Action::Revoke,
            entity_type: "token",
            entity_id: id_text,
            before: Some(serde_json::to_value(&before).unwrap_or_default()),
            after: Some(serde_json::to_value(&after).unwrap_or_default()),
        },
    )
    .await?;
    tx.commit().await?;
    Ok(Write::Done(after))
}

/// Number of live admin tokens (the first start creates one when zero).
pub async fn count_live_admins(db: &Db) -> Result<i64, sqlx::Error> {
    let n = sqlx::query_scalar!(
        r#"SELECT COUNT(*) as "n!: i64" FROM api_tokens WHERE role = 'admin' AND revoked_at IS NULL"#
    )
    .fetch_one(&db.read)
    .await?;
    Ok(n)
}

/// Whether any token was ever created (so a revoked-everything database does
/// not silently mint a new admin on restart).
pub async fn any_token(db: &Db) -> Result<bool, sqlx::Error> {
    let n = sqlx::query_scalar!(r#"SELECT COUNT(*) as "n!: i64" FROM api_tokens"#)
        .fetch_one(&db.read)
        .await?;
    Ok(n > 0)
}

pub fn role_of(info: &TokenInfo) -> Role {
    info.role
}
