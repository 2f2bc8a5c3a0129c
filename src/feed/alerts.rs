//! GTFS-Realtime Service Alerts, as far as the step-free audit reads them: the alerts whose
//! effect is `ACCESSIBILITY_ISSUE`, the stops and routes they inform, and when they are active.
//!
//! The messages are the reference's `gtfs-realtime.proto` (proto2), written out with prost's
//! derive for the fields read here (field numbers from the reference: `FeedMessage.header` 1,
//! `entity` 2; `FeedHeader.gtfs_realtime_version` 1, `timestamp` 3; `FeedEntity.id` 1,
//! `is_deleted` 2, `alert` 5; `Alert.active_period` 1, `informed_entity` 5, `effect` 7;
//! `TimeRange.start` 1, `end` 2; `EntitySelector.agency_id` 1, `route_id` 2, `stop_id` 5;
//! `Effect.ACCESSIBILITY_ISSUE` = 11). Other fields are skipped as unknown, as protobuf does.

use prost::Message;

#[derive(Clone, PartialEq, Message)]
pub struct FeedMessage {
    #[prost(message, optional, tag = "1")]
    pub header: Option<FeedHeader>,
    #[prost(message, repeated, tag = "2")]
    pub entity: Vec<FeedEntity>,
}

#[derive(Clone, PartialEq, Message)]
pub struct FeedHeader {
    #[prost(string, optional, tag = "1")]
    pub gtfs_realtime_version: Option<String>,
    #[prost(uint64, optional, tag = "3")]
    pub timestamp: Option<u64>,
}

#[derive(Clone, PartialEq, Message)]
pub struct FeedEntity {
    #[prost(string, optional, tag = "1")]
    pub id: Option<String>,
    #[prost(bool, optional, tag = "2")]
    pub is_deleted: Option<bool>,
    #[prost(message, optional, tag = "5")]
    pub alert: Option<Alert>,
}

#[derive(Clone, PartialEq, Message)]
pub struct Alert {
    #[prost(message, repeated, tag = "1")]
    pub active_period: Vec<TimeRange>,
    #[prost(message, repeated, tag = "5")]
    pub informed_entity: Vec<EntitySelector>,
    #[prost(int32, optional, tag = "7")]
    pub effect: Option<i32>,
}

#[derive(Clone, PartialEq, Message)]
pub struct TimeRange {
    /// POSIX time, s.
    #[prost(uint64, optional, tag = "1")]
    pub start: Option<u64>,
    #[prost(uint64, optional, tag = "2")]
    pub end: Option<u64>,
}

#[derive(Clone, PartialEq, Message)]
pub struct EntitySelector {
    #[prost(string, optional, tag = "1")]
    pub agency_id: Option<String>,
    #[prost(string, optional, tag = "2")]
    pub route_id: Option<String>,
    #[prost(string, optional, tag = "5")]
    pub stop_id: Option<String>,
}

/// `Alert.Effect.ACCESSIBILITY_ISSUE`.
pub const ACCESSIBILITY_ISSUE: i32 = 11;

/// One accessibility alert: what it informs, and when.
#[derive(Debug, Clone, PartialEq)]
pub struct AccessibilityAlert {
    pub entity_id: String,
    pub stop_ids: Vec<String>,
    pub route_ids: Vec<String>,
    /// (start, end) POSIX seconds, either open; empty: always active.
    pub active: Vec<(Option<u64>, Option<u64>)>,
}

impl AccessibilityAlert {
    /// Active at some moment of `[from, to)` (POSIX seconds).
    pub fn active_during(&self, from: u64, to: u64) -> bool {
        self.active.is_empty() || self.active.iter().any(|&(s, e)| s.is_none_or(|s| s < to) && e.is_none_or(|e| e > from))
    }
}

/// Reads a FeedMessage and keeps its accessibility alerts. A file that does not decode, or that
/// decodes without the header's `gtfs_realtime_version` (required by the reference; bytes of
/// another kind often decode to an empty message), is refused with the reason.
pub fn accessibility_alerts(bytes: &[u8]) -> Result<Vec<AccessibilityAlert>, String> {
    let msg = FeedMessage::decode(bytes).map_err(|e| format!("not a GTFS-Realtime FeedMessage (protobuf): {e}"))?;
    if msg.header.as_ref().and_then(|h| h.gtfs_realtime_version.as_deref()).is_none_or(str::is_empty) {
        return Err("not a GTFS-Realtime FeedMessage: no header with gtfs_realtime_version (required by the reference)".into());
    }
    Ok(msg
        .entity
        .into_iter()
        .filter(|e| !e.is_deleted.unwrap_or(false))
        .filter_map(|e| {
            let a = e.alert?;
            if a.effect != Some(ACCESSIBILITY_ISSUE) {
                return None;
            }
            Some(AccessibilityAlert {
                entity_id: e.id.unwrap_or_default(),
                stop_ids: a.informed_entity.iter().filter_map(|s| s.stop_id.clone()).filter(|s| !s.is_empty()).collect(),
                route_ids: a
                    .informed_entity
                    .iter()
                    .filter(|s| s.stop_id.as_deref().is_none_or(str::is_empty))
                    .filter_map(|s| s.route_id.clone())
                    .filter(|s| !s.is_empty())
                    .collect(),
                active: a.active_period.iter().map(|t| (t.start, t.end)).collect(),
            })
        })
        .collect())
}
