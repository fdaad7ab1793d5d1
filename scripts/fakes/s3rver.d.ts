// s3rver ships no types; the fake object store uses only its constructor, run() and close().
declare module 's3rver'
