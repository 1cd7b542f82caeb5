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
