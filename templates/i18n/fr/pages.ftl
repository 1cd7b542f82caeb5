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

# --- trips, trip, preview, events, event ---
## Words shared by these pages: trip states, event statuses, modes, alert confidence
trip-state-issued = émise
trip-state-overdue = en retard
trip-state-partly-returned = rendue en partie
trip-state-returned = rendue
trip-state-cancelled = annulée
trip-state-expired = expirée
status-unvisited = pas encore visité
status-not-reached = non atteint
status-confirmed = défrichement confirmé
status-false-alarm = fausse alerte
status-inconclusive = impossible à dire
status-disputed = contesté
mode-response = réponse
mode-assessment = évaluation
confidence-low = faible
confidence-high = haute
## Trips list and the issue form
trips-title = Missions
trips-nothing-changed = Rien n'a été modifié
trips-cancelled = Le paquet { $id } a été annulé ; les retours signés avec sa clé d'envoi sont désormais refusés.
trips-issue-title = Émettre un paquet
trips-issue-hint = Le mode réponse prend les événements les plus importants maintenant ; le mode évaluation tire un échantillon aléatoire stratifié à la taille de la marge d'erreur (graine enregistrée). « Aperçu » montre les événements choisis, l'itinéraire et sa longueur avant toute émission ; vous pouvez y décocher des événements, en ajouter par leur code et déplacer le départ. Les paquets contiennent des lieux d'activité peut-être illégale : traitez-les comme sensibles.
trips-team = Équipe
trips-choose = choisir…
trips-mode = Mode
trips-zone = Zone
trips-any-zone = toute zone
trips-from = Détecté depuis
trips-to = Détecté jusqu'au
trips-source = Source
trips-any-source = toute source
trips-confidence = Confiance d'alerte la plus haute
trips-any = toutes
trips-min-area = Surface minimale (ha)
trips-max = Nombre maximal d'événements
trips-margin = Marge d'erreur
trips-assessment-hint = (évaluation)
trips-controls = Points témoins
trips-seed = Graine
trips-seed-hint = (vide : au hasard, enregistrée)
trips-start-lat = Latitude du départ
trips-start-lon = Longitude du départ
trips-start-name = Nom du départ
trips-start-placeholder = départ
trips-walking = Vitesse à pied (km/h)
trips-due = À rendre après (jours)
trips-expires = Expire après (jours)
trips-status-legend = Seulement les événements dont l'état est
trips-status-hint = (aucun coché : tout état)
trips-extent = Emprise
trips-extent-hint = (facultatif : un Polygon ou MultiPolygon GeoJSON, ou une Feature qui en contient un, jusqu'à 64 Kio ; collez-le ou choisissez son fichier)
trips-extent-file = Fichier d'emprise
trips-preview = Aperçu
trips-issue-now = Émettre sans aperçu
trips-filter = Filtrer les missions
trips-state = État
trips-any-state = tout état
trips-every-team = toutes les équipes
trips-show = Afficher
trips-none = Aucun paquet n'a encore été émis.
trips-none-match = Aucune mission ne correspond à ces filtres ({ $all } en tout).
trips-count = { $shown } sur { $all } mission(s).
trips-states-explained = En retard : date passée sans rien de rendu ; expirée : validité passée sans rien de rendu ; rendue : chaque étape a un rapport.
trips-col-trip = Mission
trips-col-issued = Émise
trips-col-due = À rendre
trips-col-events = Événements
trips-col-controls = Témoins
trips-col-route = Itinéraire (km)
trips-col-reports = Rapports
trips-col-actions = Actions
trips-returns = ({ $n } retour(s))
trips-open = Ouvrir
trips-open-label = Ouvrir la mission { $id }
trips-download = Télécharger
trips-pair = Associer un téléphone
trips-pair-label = Associer un téléphone au paquet { $id }
trips-cancel = Annuler
trips-cancel-label = Annuler le paquet { $id }
