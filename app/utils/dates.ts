// Dates are written in UTC so the server-rendered page and the browser agree on the day.
// Each formatter is built once, here: making an Intl.DateTimeFormat costs far more than using
// one, and a date component is set up many times on one server-rendered page.

/** "4 Mar 2026" */
export const DAY_FORMAT = new Intl.DateTimeFormat('en-GB', { day: 'numeric', month: 'short', year: 'numeric', timeZone: 'UTC' })
/** "4 Mar 2026, 14:05 UTC" */
export const DAY_TIME_FORMAT = new Intl.DateTimeFormat('en-GB', { day: 'numeric', month: 'short', year: 'numeric', hour: '2-digit', minute: '2-digit', timeZone: 'UTC', timeZoneName: 'short' })
/** "4 Mar, 14:05 UTC" */
export const DAY_MONTH_TIME_FORMAT = new Intl.DateTimeFormat('en-GB', { day: 'numeric', month: 'short', hour: '2-digit', minute: '2-digit', timeZone: 'UTC', timeZoneName: 'short' })
/** "4 Mar" */
export const DAY_MONTH_FORMAT = new Intl.DateTimeFormat('en-GB', { day: 'numeric', month: 'short', timeZone: 'UTC' })
