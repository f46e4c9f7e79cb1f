//! OMM readers (placeholder: being written).
use super::LoadReport;

pub(super) fn load_xml(_bytes: &[u8], _file: &str, _report: &mut LoadReport) {}
pub(super) fn load_json(_bytes: &[u8], _file: &str, _report: &mut LoadReport) {}
pub(super) fn load_kvn(_bytes: &[u8], _file: &str, _report: &mut LoadReport) {}
