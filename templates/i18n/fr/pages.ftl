# Messages des pages du serveur (voir en/pages.ftl).

## Mise en page
menu-main = Principal
menu-events = Événements
menu-import = Importer
menu-trips = Missions
menu-station = Dépôt à la base
menu-dashboard = Tableau de bord
menu-disputes = Désaccords
signed-in-as = Connecté en tant que
log-out = Se déconnecter
not-signed-in = Non connecté
language-switch = Langue
language-switch-button = Changer

## Consignes de sécurité
footer-safety-title = La sécurité d'abord
footer-safety-approach = N'approchez pas d'un défrichement en cours, d'engins ni de personnes armées.
footer-safety-approach-more = Observez à distance sûre, notez ce que vous pouvez et partez. « Non atteint : sécurité » est un bon rapport.
footer-safety-protocol = Suivez le protocole de sécurité de votre organisation et la loi locale (autorisations, accès aux terres, plan de déplacement, heures de contact).
footer-safety-consent = Photographier des personnes demande leur accord. Photographiez le terrain, pas les gens.
footer-safety-evidence = Les preuves destinées à la justice suivent les règles locales et la pratique de professionnels habilités. Groundproof garde les photos sans modification et identifiées par leur contenu, mais ce n'est pas un système de chaîne de traçabilité.
footer-safety-sensitive = Les paquets et les retours contiennent des lieux d'activité peut-être illégale : traitez-les comme confidentiels.

## Connexion
login-title = Connexion
login-intro = Connectez-vous pour suivre les alertes de déforestation.
login-name = Nom d'utilisateur
login-password = Mot de passe
login-button = Se connecter
login-note = Le travail de terrain peut être dangereux : n'approchez pas d'opérations en cours ni de personnes armées, et suivez le protocole de sécurité de votre organisation et la loi locale.
login-bad-credentials = Ce nom d'utilisateur et ce mot de passe ne correspondent pas.
login-locked = Trop d'essais manqués : attendez 15 minutes et réessayez.
login-failed = La connexion a échoué ; voir le journal du serveur.
login-session-ended = Votre session a pris fin (délai dépassé, ou déconnexion ailleurs). Reconnectez-vous ; votre dernier envoi n'a pas été enregistré.

## Page d'erreur
error-back = Revenez à la page précédente, ou à
error-start-page = la page d'accueil

## Importer
import-title = Importer
import-nothing = Rien n'a été importé
import-imported-as = { $file } importé comme { $source }
import-rows-read = lignes lues
import-alerts = alertes importées
import-duplicates = doublons écartés
import-skipped = lignes invalides ignorées
import-events-created = événements créés
import-events-grown = événements agrandis
import-events-merged = événements fusionnés
import-skipped-rows = Lignes ignorées
import-warnings = Avertissements
import-see-events = Voir les événements
import-zones-done = Zones importées
import-zones-summary = Zones : { $zones }. Événements rattachés de nouveau à leurs zones : { $relinked }.
import-alert-file = Fichier d'alertes
import-alert-hint = CSV (ligne d'en-tête, virgule ou point-virgule) ou points GeoJSON. Au plus { $limit }. Un fichier qui contient une erreur n'importe rien, sauf si vous ignorez les lignes invalides.
import-no-source = Aucune source d'alertes n'est encore enregistrée. Enregistrez-en une d'abord :
import-registered = Enregistrées : { $sizes }.
import-source = Source
import-choose = choisir…
import-format = Format
import-format-auto = d'après le fichier
import-threshold = Seuil de confiance
import-threshold-hint = (confiance numérique seulement)
import-file = Fichier
import-skip-invalid = Ignorer les lignes invalides (importer les valides et lister les autres)
import-alerts-button = Importer les alertes
import-zone-file = Fichier de zones
import-zone-hint = FeatureCollection GeoJSON d'entités Polygon ou MultiPolygon avec un texte « name » et, en option, un booléen « priority ». Une zone dont le nom est déjà enregistré est remplacée. Au plus { $limit }.
import-zones-button = Importer les zones

## Appairer un téléphone
pair-page-title = Appairer un téléphone
pair-page-bundle = Paquet { $id } pour { $team }, à rendre le { $due }.
pair-another = Un autre code
pair-back = Retour aux missions
pair-back-trip = Retour à la mission
pairing-title = Mettre cette mission sur un téléphone
pairing-qr-label = Code QR qui ouvre l'application de terrain avec cette mission
pairing-scan = Sur le téléphone de l'équipe, lisez le code avec l'appareil photo, ou ouvrez l'application de terrain et tapez ce code :
pairing-open-app = Ouvrir l'application de terrain
pairing-once = Le code sert une fois, pour un téléphone, jusqu'au { $expires }. Faites-en un autre pour chaque téléphone. Le téléphone contient alors des lieux d'activité peut-être illégale : traitez-le comme confidentiel.

# --- station, station entry, report cards, field sheet ---
sheet-title = Fiche de terrain
sheet-safety-title = La sécurité d'abord
sheet-safety-approach = N'approchez pas d'opérations en cours (engins, abattage, brûlis, mine) ni de personnes armées. Si vous en rencontrez, partez discrètement ; aucune photo ni aucun relevé ne vaut ce risque.
sheet-safety-protocol = Suivez en tout temps le protocole de sécurité de votre organisation et la loi locale.
sheet-safety-consent = Photographier des personnes demande leur accord. Sans accord, photographiez le terrain, pas la personne.
sheet-safety-evidence = Le traitement des preuves pour la justice suit les règles locales et la pratique habilitée. Vos rapports et photos sont des observations de terrain ; ce sont les personnes habilitées qui les transmettent comme preuves.
sheet-sensitive = Sensible :
sheet-sensitive-text = cette fiche montre des lieux d'activité peut-être illégale. Gardez-la sur vous, ne la partagez pas et détruisez-la après la tournée.
sheet-team = Équipe
sheet-sheet = Fiche
sheet-bundle = Paquet
sheet-issued = Émis
sheet-back-by = Retour avant
sheet-expires = Expire
sheet-kind = Type
sheet-mode-response = réponse
sheet-mode-assessment = évaluation
sheet-seed = graine de l'échantillon { $seed }
sheet-checklist = Liste de contrôle
sheet-checklist-version = version { $version }
sheet-stops = Arrêts
sheet-stops-count = { $events } événements, { $controls } points de contrôle
sheet-paper-help = Avec cette fiche et un appareil photo : à chaque arrêt, cochez le résultat, notez la position observée, l'heure, les numéros des photos prises et qui a observé ; la station saisit la fiche avec les photos de l'appareil (fiche { $sheet }).
sheet-assessment = Tournée d'évaluation :
sheet-assessment-text = visitez tous les arrêts, même ceux qui semblent sans intérêt ; sauter des arrêts fausse les résultats.
sheet-route-title = Départ et itinéraire
sheet-start = Départ : { $name }
sheet-stop = Arrêt
sheet-code = Code
sheet-leg = Distance du tronçon (km)
sheet-total = Total
sheet-straight = Les distances des tronçons sont des lignes droites entre les arrêts, pas des distances à pied.
sheet-legend = Légende de la carte
sheet-legend-pixels = pixels d'alerte de { $source }
sheet-legend-footprint = contour gris : emprise de l'événement
sheet-legend-cross = croix noire : point où marcher (centroïde)
sheet-events = Événements ({ $n })
sheet-stop-n = Arrêt { $n }
sheet-corroborated = confirmé par une autre source
sheet-area = Surface
sheet-detected = Détecté
sheet-dates = du { $first } au { $last }
sheet-sources = Sources
sheet-stratum = Strate
sheet-preview-alt = Aperçu de { $code } : emprise, pixels d'alerte, centroïde, flèche du nord et échelle
sheet-no-preview = Pas d'aperçu.
sheet-north = Nord en haut ; croix noire : centroïde.
sheet-outcome = Résultat
sheet-if-false-alarm = Si fausse alerte
sheet-if-not-reached = Si non atteint
sheet-if-confirmed-cause = Si confirmé, cause
sheet-photos-taken = photos prises (min { $min })
sheet-position-recorded = position relevée
sheet-notes = Notes :
sheet-controls = Points de contrôle ({ $n })
sheet-controls-help = Pas d'alerte ici : cherchez un défrichement que les alertes auraient manqué et rapportez ce que vous voyez.
sheet-gps-name = Sur le GPS :
sheet-if-clearing-cause = Si défrichement trouvé, cause
sheet-if-clearing-area = Si défrichement trouvé, surface estimée :
sheet-pos-dd = Lat, lon (DD, WGS 84)
sheet-pos-utm = UTM (mètres, tronqués : le carré de 1 m où se trouve le point)
sheet-pos-mgrs = MGRS (1 m, tronqué comme l'UTM)
sheet-zone = zone
sheet-hemisphere-north = nord
sheet-hemisphere-south = sud
sheet-outside-utm = hors de la bande UTM
sheet-outside-mgrs = hors de la bande UTM/MGRS
sheet-observed-position = Position observée (lat, lon)
sheet-date-time = Date et heure (locales)
sheet-photo-numbers = Numéros des photos
sheet-observer = Observateur
