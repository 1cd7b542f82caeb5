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

# --- station, station entry, report cards, field sheet ---
sheet-title = Field sheet
sheet-safety-title = Safety first
sheet-safety-approach = Do not approach active operations (machinery, felling, burning, mining) or armed people. If you meet them, leave quietly; no photo or record is worth the risk.
sheet-safety-protocol = Follow your organisation's safety protocol and local law at all times.
sheet-safety-consent = Photos of people need their consent. Without it, photograph the ground, not the person.
sheet-safety-evidence = Evidence handling for legal cases follows local rules and licensed practice. Your reports and photos are field observations; passing them on as evidence is done by the people licensed to do so.
sheet-sensitive = Sensitive:
sheet-sensitive-text = this sheet shows places of possibly illegal activity. Keep it with you, do not share it, and destroy it after the trip.
sheet-team = Team
sheet-sheet = Sheet
sheet-bundle = Bundle
sheet-issued = Issued
sheet-back-by = Back by
sheet-expires = Expires
sheet-kind = Kind
sheet-mode-response = response
sheet-mode-assessment = assessment
sheet-seed = sample seed { $seed }
sheet-checklist = Checklist
sheet-checklist-version = version { $version }
sheet-stops = Stops
sheet-stops-count = { $events } events, { $controls } control points
sheet-paper-help = With this sheet and a camera: at each stop, tick the outcome, write the observed position, the time, the numbers of the photos you took there and who observed; the station enters the sheet with the camera's photos (sheet { $sheet }).
sheet-assessment = Assessment trip:
sheet-assessment-text = visit every stop, including those that look unremarkable; skipping stops biases the results.
sheet-route-title = Start and route
sheet-start = Start: { $name }
sheet-stop = Stop
sheet-code = Code
sheet-leg = Leg distance (km)
sheet-total = Total
sheet-straight = Leg distances are straight lines between stops, not walking distances.
sheet-legend = Map legend
sheet-legend-pixels = alert pixels of { $source }
sheet-legend-footprint = grey outline: event footprint
sheet-legend-cross = black cross: point to walk to (centroid)
sheet-events = Events ({ $n })
sheet-stop-n = Stop { $n }
sheet-corroborated = corroborated
sheet-area = Area
sheet-detected = Detected
sheet-dates = { $first } to { $last }
sheet-sources = Sources
sheet-stratum = Stratum
sheet-preview-alt = Preview of { $code }: footprint, alert pixels, centroid, north arrow and scale bar
sheet-no-preview = No preview.
sheet-north = North up; black cross: centroid.
sheet-outcome = Outcome
sheet-if-false-alarm = If false alarm
sheet-if-not-reached = If not reached
sheet-if-confirmed-cause = If confirmed, cause
sheet-photos-taken = photos taken (min { $min })
sheet-position-recorded = position recorded
sheet-notes = Notes:
sheet-controls = Control points ({ $n })
sheet-controls-help = No alert here: look for clearing the alerts may have missed and report what you see.
sheet-gps-name = On the GPS unit:
sheet-if-clearing-cause = If clearing found, cause
sheet-if-clearing-area = If clearing found, estimated area:
sheet-pos-dd = Lat, lon (DD, WGS 84)
sheet-pos-utm = UTM (metres, truncated: the 1 m square the point lies in)
sheet-pos-mgrs = MGRS (1 m, truncated like UTM)
sheet-zone = zone
sheet-hemisphere-north = north
sheet-hemisphere-south = south
sheet-outside-utm = outside the UTM band
sheet-outside-mgrs = outside the UTM/MGRS band
sheet-observed-position = Observed position (lat, lon)
sheet-date-time = Date and time (local)
sheet-photo-numbers = Photo numbers
sheet-observer = Observer
