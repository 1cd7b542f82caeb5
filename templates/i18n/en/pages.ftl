# Messages of the server's pages (templates/base.html and the pages that call
# `layout.tr`). Ids: lower case, words joined by "-". Each language's file has
# the same ids (checked at start-up and by `catalogue.py check`).

## Layout: navigation, header, language switch
menu-main = Main
menu-events = Events
menu-import = Import
menu-trips = Trips
menu-station = Station upload
menu-dashboard = Dashboard
menu-disputes = Disputes
signed-in-as = Signed in as
log-out = Log out
not-signed-in = Not signed in
language-switch = Language
language-switch-button = Change

## Layout: the safety cautions of the footer
footer-safety-title = Safety first
footer-safety-approach = Do not approach active clearing operations, machinery, or armed people.
footer-safety-approach-more = Observe from a safe distance, record what you can, and leave. "Not reached: safety" is a good report.
footer-safety-protocol = Follow your organisation's safety protocol and the local law (permits, land access, travel plans, check-in times).
footer-safety-consent = Photos of people need their consent. Photograph the land, not the people.
footer-safety-evidence = Evidence for legal cases follows local rules and licensed practice. Groundproof keeps photos unmodified and content-addressed, but it is not a chain-of-custody system.
footer-safety-sensitive = Bundles and returns hold locations of possibly illegal activity: treat them as sensitive.

## Login page
login-title = Log in
login-intro = Log in to follow up deforestation alerts.
login-name = User name
login-password = Password
login-button = Log in
login-note = Field work can be dangerous: do not approach active operations or armed people, and follow your organisation's safety protocol and local law.
login-bad-credentials = That user name and password do not match.
login-locked = Too many failed attempts: wait 15 minutes and try again.
login-failed = Login failed; see the server log.
login-session-ended = Your session has ended (it timed out, or you logged out elsewhere). Log in again; what you last sent was not saved.

## Error page
error-back = Go back to the page you came from, or to
error-start-page = the start page

## Import page
import-title = Import
import-nothing = Nothing was imported
import-imported-as = Imported { $file } as { $source }
import-rows-read = rows read
import-alerts = alerts imported
import-duplicates = duplicates dropped
import-skipped = invalid rows skipped
import-events-created = events created
import-events-grown = events grown
import-events-merged = events merged
import-skipped-rows = Skipped rows
import-warnings = Warnings
import-see-events = See the events
import-zones-done = Zones imported
import-zones-summary = Zones: { $zones }. Events linked again to their zones: { $relinked }.
import-alert-file = Alert file
import-alert-hint = CSV (header row, comma or semicolon) or GeoJSON points. At most { $limit }. A file with any error imports nothing unless you skip invalid rows.
import-no-source = No alert source is registered yet. Register one first:
import-registered = Registered: { $sizes }.
import-source = Source
import-choose = choose…
import-format = Format
import-format-auto = detect from the file
import-threshold = Confidence threshold
import-threshold-hint = (numeric confidence only)
import-file = File
import-skip-invalid = Skip invalid rows (import the valid ones and list the rest)
import-alerts-button = Import alerts
import-zone-file = Zone file
import-zone-hint = GeoJSON FeatureCollection of Polygon or MultiPolygon features with a string "name" and an optional boolean "priority". A zone with a stored name is replaced. At most { $limit }.
import-zones-button = Import zones

## Pairing a phone (trip page box and the pair page)
pair-page-title = Pair a phone
pair-page-bundle = Bundle { $id } for { $team }, due { $due }.
pair-another = Another code
pair-back = Back to trips
pair-back-trip = Back to the trip
pairing-title = Put this trip on a phone
pairing-qr-label = QR code that opens the field app with this trip
pairing-scan = On the team's phone, scan the code with the camera, or open the field app and type this code:
pairing-open-app = Open the field app
pairing-once = The code works once, for one phone, until { $expires }. Make another for each phone. The phone then holds locations of possibly illegal activity: treat it as sensitive.

# --- trips, trip, preview, events, event ---
## Words shared by these pages: trip states, event statuses, modes, alert confidence
trip-state-issued = issued
trip-state-overdue = overdue
trip-state-partly-returned = partly returned
trip-state-returned = returned
trip-state-cancelled = cancelled
trip-state-expired = expired
status-unvisited = not yet visited
status-not-reached = not reached
status-confirmed = confirmed loss
status-false-alarm = false alarm
status-inconclusive = inconclusive
status-disputed = disputed
mode-response = response
mode-assessment = assessment
confidence-low = low
confidence-high = high
## Trips list and the issue form
trips-title = Trips
trips-nothing-changed = Nothing was changed
trips-cancelled = Bundle { $id } was cancelled; returns signed with its upload key are refused from now on.
trips-issue-title = Issue a bundle
trips-issue-hint = Response mode takes the events that matter most now; assessment mode draws a stratified random sample sized for the margin of error (seeded and recorded). “Preview” shows the chosen events, the route and its length before anything is issued; there you can untick events, add others by code and move the start. Bundles hold locations of possibly illegal activity: treat them as sensitive.
trips-team = Team
trips-choose = choose…
trips-mode = Mode
trips-zone = Zone
trips-any-zone = any zone
trips-from = Detected from
trips-to = Detected to
trips-source = Source
trips-any-source = any source
trips-confidence = Highest alert confidence
trips-any = any
trips-min-area = Minimum area (ha)
trips-max = Most events
trips-margin = Margin of error
trips-assessment-hint = (assessment)
trips-controls = Control points
trips-seed = Seed
trips-seed-hint = (blank: random, recorded)
trips-start-lat = Start latitude
trips-start-lon = Start longitude
trips-start-name = Start name
trips-start-placeholder = start
trips-walking = Walking speed (km/h)
trips-due = Due after (days)
trips-expires = Expires after (days)
trips-status-legend = Only events whose status is
trips-status-hint = (none ticked: any status)
trips-extent = Extent
trips-extent-hint = (optional: a GeoJSON Polygon or MultiPolygon, or a Feature holding one, up to 64 KiB; paste it or choose its file)
trips-extent-file = Extent file
trips-preview = Preview
trips-issue-now = Issue without preview
trips-filter = Filter trips
trips-state = State
trips-any-state = any state
trips-every-team = every team
trips-show = Show
trips-none = No bundle has been issued yet.
trips-none-match = No trip matches these filters ({ $all } trip(s) in all).
trips-count = { $shown } of { $all } trip(s).
trips-states-explained = Overdue: past due with nothing returned; expired: past its expiry with nothing returned; returned: every stop has a report.
trips-col-trip = Trip
trips-col-issued = Issued
trips-col-due = Due
trips-col-events = Events
trips-col-controls = Controls
trips-col-route = Route (km)
trips-col-reports = Reports
trips-col-actions = Actions
trips-returns = ({ $n } return(s))
trips-open = Open
trips-open-label = Open trip { $id }
trips-download = Download
trips-pair = Pair a phone
trips-pair-label = Pair a phone with bundle { $id }
trips-cancel = Cancel
trips-cancel-label = Cancel bundle { $id }
## Trip page
trip-kind-event = event
trip-kind-control = control point
trip-kind-new-clearing = new clearing
trip-issued-title = Bundle issued
trip-bundle-for = Bundle { $id } for { $team }
trip-download = Download the bundle (ZIP)
trip-give-it = Give it to the team before the trip. It holds locations of possibly illegal activity: treat it as sensitive.
trip-come-back = This trip's page, to come back to:
trip-progress = { $reported } of { $stops } stops reported, { $returns } return(s)
trip-expires = Expires
trip-cancelled-at = Cancelled
trip-key-refused = returns signed with its key are refused
trip-route = Route
trip-route-km = { $km } km straight-line
trip-walking-hours = about { $hours } h walking
trip-route-note = Route note
trip-pair-qr = Pair a phone (QR code)
trip-cancel = Cancel this trip
trip-stops-title = Stops in visit order
trip-col-stop = Stop
trip-col-code = Code
trip-col-kind = Kind
trip-col-status = Status
trip-col-lat = Latitude
trip-col-lon = Longitude
trip-col-stratum = Stratum
trip-no-report = no report
trip-reported = reported
trip-none-yet = none yet
trip-new-clearings = New clearings found on the way ({ $n })
trip-returns-title = Returns received ({ $n })
trip-nothing-back = Nothing has come back from this trip yet.
trip-col-return = Return
trip-col-received = Received
trip-col-size = Size
trip-strata-title = Sample strata
trip-col-population = Population
trip-col-sampled = Sampled
trip-col-probability = Inclusion probability
## Events and event pages: alert confidence is "high" or "low", never "confirmed"
events-confidence = Alert confidence
event-highest-confidence = Highest alert confidence
