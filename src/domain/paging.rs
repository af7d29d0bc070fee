//! Cursor pagination: lists are ordered by a stable key and the cursor is the
//! last key returned, encoded opaquely so clients do not build it themselves.

use base64::Engine as _;
use base64::engine::general_purpose::URL_SAFE_NO_PAD;
use serde::{Deserialize, Serialize};
use utoipa::{IntoParams, ToSchema};

use crate::error::ApiError;

pub const DEFAULT_LIMIT: u32 = 50;
pub const MAX_LIMIT: u32 = 200;

#[derive(Debug, Clone, Default, Deserialize, IntoParams)]
#[serde(deny_unknown_fields)]
#[into_params(parameter_in = Query)]
pub struct PageParams {
    /// Items per page, 1 to 200 (default 50).
    #[param(minimum = 1, maximum = 200)]
    pub limit: Option<u32>,
    /// The `next_cursor` of the previous page.
    pub cursor: Option<String>,
}

impl PageParams {
    pub fn limit(&self) -> Result<u32, ApiError> {
        match self.limit {
            None => Ok(DEFAULT_LIMIT),
            Some(n) if (1..=MAX_LIMIT).contains(&n) => Ok(n),
            Some(_) => Err(ApiError::field("limit", "must be between 1 and 200")),
        }
    }

    /// Decodes the cursor into the sort key it stands for.
    pub fn after<K: for<'de> Deserialize<'de>>(&self) -> Result<Option<K>, ApiError> {
        let Some(raw) = &self.cursor else {
            return Ok(None);
        };
        URL_SAFE_NO_PAD
            .decode(raw)
            .ok()
            .and_then(|bytes| serde_json::from_slice(&bytes).ok())
            .map(Some)
            .ok_or_else(|| ApiError::field("cursor", "is not a cursor this API returned"))
    }
}

pub fn encode_cursor<K: Serialize>(key: &K) -> String {
    URL_SAFE_NO_PAD.encode(serde_json::to_vec(key).unwrap_or_default())
}

/// One page of a list. Every list endpoint answers this shape and takes the
/// same `limit` and `cursor` parameters.
#[derive(Debug, Serialize, ToSchema)]
pub struct Page<T> {
    pub items: Vec<T>,
    /// Pass as `cursor` to get the next page; `null` on the last page.
    #[schema(required = true)]
    pub next_cursor: Option<String>,
}

impl<T> Page<T> {
    /// Builds a page from up to `limit + 1` fetched items; the extra one only
    /// tells that another page exists.
    pub fn from_overfetch<K: Serialize>(
        mut items: Vec<T>,
        limit: u32,
        key: impl Fn(&T) -> K,
    ) -> Self {
        let more = items.len() > limit as usize;
        items.truncate(limit as usize);
        let next_cursor = if more {
            items.last().map(|last| encode_cursor(&key(last)))
        } else {
            None
        };
        Self { items, next_cursor }
    }

    /// Pages a complete list already sorted by `key` (ascending, or
    /// descending for newest-first lists): for short lists read whole.
    pub fn from_sorted<K>(
        items: Vec<T>,
        page: &PageParams,
        descending: bool,
        key: impl Fn(&T) -> K,
    ) -> Result<Self, ApiError>
    where
        K: Serialize + for<'de> Deserialize<'de> + PartialOrd,
    {
        let limit = page.limit()?;
        let after: Option<K> = page.after()?;
        let rest: Vec<T> = match &after {
            Some(after) => items
                .into_iter()
                .filter(|item| {
                    let k = key(item);
                    if descending { k < *after } else { k > *after }
                })
                .collect(),
            None => items,
        };
        let mut rest = rest;
        rest.truncate(limit as usize + 1);
        Ok(Self::from_overfetch(rest, limit, key))
    }
}
