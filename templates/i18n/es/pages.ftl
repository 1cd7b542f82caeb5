# Mensajes de las páginas del servidor (ver en/pages.ftl).

## Diseño
menu-main = Principal
menu-events = Eventos
menu-import = Importar
menu-trips = Viajes
menu-station = Carga en la estación
menu-dashboard = Panel
menu-disputes = Discrepancias
signed-in-as = Sesión iniciada como
log-out = Cerrar sesión
not-signed-in = Sin sesión
language-switch = Idioma
language-switch-button = Cambiar

## Avisos de seguridad
footer-safety-title = Primero, la seguridad
footer-safety-approach = No se acerque a desmontes en curso, a maquinaria ni a personas armadas.
footer-safety-approach-more = Observe desde una distancia segura, anote lo que pueda y retírese. "No alcanzado: seguridad" es un buen informe.
footer-safety-protocol = Siga el protocolo de seguridad de su organización y la ley local (permisos, acceso a la tierra, plan de viaje, horarios de reporte).
footer-safety-consent = Las fotos de personas necesitan su consentimiento. Fotografíe la tierra, no a las personas.
footer-safety-evidence = Las pruebas para causas judiciales siguen las normas locales y la práctica de profesionales habilitados. Groundproof guarda las fotos sin modificar e identificadas por su contenido, pero no es un sistema de cadena de custodia.
footer-safety-sensitive = Los paquetes y las devoluciones contienen lugares de actividad posiblemente ilegal: trátelos como confidenciales.

## Iniciar sesión
login-title = Iniciar sesión
login-intro = Inicie sesión para dar seguimiento a las alertas de deforestación.
login-name = Nombre de usuario
login-password = Contraseña
login-button = Entrar
login-note = El trabajo de campo puede ser peligroso: no se acerque a operaciones en curso ni a personas armadas, y siga el protocolo de seguridad de su organización y la ley local.
login-bad-credentials = El nombre de usuario y la contraseña no coinciden.
login-locked = Demasiados intentos fallidos: espere 15 minutos y vuelva a intentarlo.
login-failed = No se pudo iniciar sesión; vea el registro del servidor.
login-session-ended = Su sesión terminó (se agotó el tiempo, o cerró sesión en otro lugar). Vuelva a entrar; lo último que envió no se guardó.

## Página de error
error-back = Vuelva a la página de la que venía, o a
error-start-page = la página de inicio

## Importar
import-title = Importar
import-nothing = No se importó nada
import-imported-as = { $file } importado como { $source }
import-rows-read = filas leídas
import-alerts = alertas importadas
import-duplicates = duplicados descartados
import-skipped = filas no válidas omitidas
import-events-created = eventos creados
import-events-grown = eventos ampliados
import-events-merged = eventos unidos
import-skipped-rows = Filas omitidas
import-warnings = Advertencias
import-see-events = Ver los eventos
import-zones-done = Zonas importadas
import-zones-summary = Zonas: { $zones }. Eventos vinculados de nuevo a sus zonas: { $relinked }.
import-alert-file = Archivo de alertas
import-alert-hint = CSV (fila de encabezado, coma o punto y coma) o puntos GeoJSON. Como máximo { $limit }. Un archivo con cualquier error no importa nada, salvo que omita las filas no válidas.
import-no-source = Todavía no hay ninguna fuente de alertas registrada. Registre una primero:
import-registered = Registradas: { $sizes }.
import-source = Fuente
import-choose = elija…
import-format = Formato
import-format-auto = detectar por el archivo
import-threshold = Umbral de confianza
import-threshold-hint = (solo confianza numérica)
import-file = Archivo
import-skip-invalid = Omitir filas no válidas (importar las válidas y listar las demás)
import-alerts-button = Importar alertas
import-zone-file = Archivo de zonas
import-zone-hint = FeatureCollection GeoJSON de entidades Polygon o MultiPolygon con un texto "name" y, opcionalmente, un booleano "priority". Una zona con un nombre ya guardado se reemplaza. Como máximo { $limit }.
import-zones-button = Importar zonas

## Emparejar un teléfono
pair-page-title = Emparejar un teléfono
pair-page-bundle = Paquete { $id } para { $team }, plazo { $due }.
pair-another = Otro código
pair-back = Volver a los viajes
pair-back-trip = Volver al viaje
pairing-title = Poner este viaje en un teléfono
pairing-qr-label = Código QR que abre la aplicación de campo con este viaje
pairing-scan = En el teléfono del equipo, lea el código con la cámara, o abra la aplicación de campo y escriba este código:
pairing-open-app = Abrir la aplicación de campo
pairing-once = El código sirve una vez, para un teléfono, hasta { $expires }. Haga otro para cada teléfono. El teléfono tendrá entonces lugares de actividad posiblemente ilegal: trátelo como confidencial.

# --- trips, trip, preview, events, event ---
## Words shared by these pages: trip states, event statuses, modes, alert confidence
trip-state-issued = emitido
trip-state-overdue = atrasado
trip-state-partly-returned = devuelto en parte
trip-state-returned = devuelto
trip-state-cancelled = cancelado
trip-state-expired = vencido
status-unvisited = aún no visitado
status-not-reached = no alcanzado
status-confirmed = desmonte confirmado
status-false-alarm = falsa alarma
status-inconclusive = no se puede saber
status-disputed = en disputa
mode-response = respuesta
mode-assessment = evaluación
confidence-low = baja
confidence-high = alta
## Trips list and the issue form
trips-title = Viajes
trips-nothing-changed = No se cambió nada
trips-cancelled = El paquete { $id } fue cancelado; desde ahora se rechazan las devoluciones firmadas con su clave de envío.
trips-issue-title = Emitir un paquete
trips-issue-hint = El modo respuesta toma los eventos que más importan ahora; el modo evaluación sortea una muestra aleatoria estratificada del tamaño del margen de error (con semilla, registrada). “Vista previa” muestra los eventos elegidos, la ruta y su longitud antes de emitir nada; allí puede desmarcar eventos, añadir otros por código y mover el inicio. Los paquetes contienen lugares de actividad posiblemente ilegal: trátelos como sensibles.
trips-team = Equipo
trips-choose = elegir…
trips-mode = Modo
trips-zone = Zona
trips-any-zone = cualquier zona
trips-from = Detectado desde
trips-to = Detectado hasta
trips-source = Fuente
trips-any-source = cualquier fuente
trips-confidence = Mayor confianza de la alerta
trips-any = cualquiera
trips-min-area = Área mínima (ha)
trips-max = Máximo de eventos
trips-margin = Margen de error
trips-assessment-hint = (evaluación)
trips-controls = Puntos de control
trips-seed = Semilla
trips-seed-hint = (vacío: al azar, registrada)
trips-start-lat = Latitud de inicio
trips-start-lon = Longitud de inicio
trips-start-name = Nombre del inicio
trips-start-placeholder = inicio
trips-walking = Velocidad a pie (km/h)
trips-due = Plazo (días)
trips-expires = Vence a los (días)
trips-status-legend = Solo eventos cuyo estado es
trips-status-hint = (ninguno marcado: cualquier estado)
trips-extent = Área de trabajo
trips-extent-hint = (opcional: un Polygon o MultiPolygon GeoJSON, o una Feature que lo contenga, hasta 64 KiB; péguelo o elija su archivo)
trips-extent-file = Archivo del área
trips-preview = Vista previa
trips-issue-now = Emitir sin vista previa
trips-filter = Filtrar viajes
trips-state = Estado
trips-any-state = cualquier estado
trips-every-team = todos los equipos
trips-show = Mostrar
trips-none = Aún no se ha emitido ningún paquete.
trips-none-match = Ningún viaje coincide con estos filtros ({ $all } en total).
trips-count = { $shown } de { $all } viaje(s).
trips-states-explained = Atrasado: plazo vencido sin nada devuelto; vencido: pasó su validez sin nada devuelto; devuelto: cada parada tiene un informe.
trips-col-trip = Viaje
trips-col-issued = Emitido
trips-col-due = Plazo
trips-col-events = Eventos
trips-col-controls = Controles
trips-col-route = Ruta (km)
trips-col-reports = Informes
trips-col-actions = Acciones
trips-returns = ({ $n } devolución(es))
trips-open = Abrir
trips-open-label = Abrir el viaje { $id }
trips-download = Descargar
trips-pair = Emparejar un teléfono
trips-pair-label = Emparejar un teléfono con el paquete { $id }
trips-cancel = Cancelar
trips-cancel-label = Cancelar el paquete { $id }
