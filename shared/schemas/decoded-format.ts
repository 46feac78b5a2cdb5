// The decoded-capture file's names and limits, apart from its schemas (decoded-upload.ts): the
// browser's decode worker writes the file with these and no validation library, so it starts
// without evaluating one.
export const DECODED_FORMAT = 'flagline-decoded';
export const DECODED_VERSION = 1;
/** the media type the upload is sent with */
export const DECODED_MEDIA_TYPE = 'application/x-ndjson';
/** longest frame accepted, in octets: far beyond any record-sized frame, short of a runaway between lost flags */
export const DECODED_MAX_FRAME_OCTETS = 65_536;
