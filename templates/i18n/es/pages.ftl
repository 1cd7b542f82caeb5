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

# --- station, station entry, report cards, field sheet ---
sheet-title = Hoja de campo
sheet-safety-title = Primero la seguridad
sheet-safety-approach = No se acerque a operaciones en curso (maquinaria, tala, quema, minería) ni a personas armadas. Si las encuentra, retírese en silencio; ninguna foto o registro vale el riesgo.
sheet-safety-protocol = Siga siempre el protocolo de seguridad de su organización y la ley local.
sheet-safety-consent = Las fotos de personas necesitan su consentimiento. Sin él, fotografíe el terreno, no a la persona.
sheet-safety-evidence = El manejo de pruebas para casos legales sigue las reglas locales y la práctica habilitada. Sus informes y fotos son observaciones de campo; quienes los entregan como prueba son las personas habilitadas para ello.
sheet-sensitive = Confidencial:
sheet-sensitive-text = esta hoja muestra lugares de actividad posiblemente ilegal. Llévela consigo, no la comparta y destrúyala después del viaje.
sheet-team = Equipo
sheet-sheet = Hoja
sheet-bundle = Paquete
sheet-issued = Emitido
sheet-back-by = Volver antes de
sheet-expires = Vence
sheet-kind = Tipo
sheet-mode-response = respuesta
sheet-mode-assessment = evaluación
sheet-seed = semilla de la muestra { $seed }
sheet-checklist = Lista de control
sheet-checklist-version = versión { $version }
sheet-stops = Paradas
sheet-stops-count = { $events } eventos, { $controls } puntos de control
sheet-paper-help = Con esta hoja y una cámara: en cada parada, marque el resultado, anote la posición observada, la hora, los números de las fotos que tomó allí y quién observó; la estación carga la hoja con las fotos de la cámara (hoja { $sheet }).
sheet-assessment = Viaje de evaluación:
sheet-assessment-text = visite todas las paradas, también las que parecen sin nada; saltarse paradas sesga los resultados.
sheet-route-title = Salida y ruta
sheet-start = Salida: { $name }
sheet-stop = Parada
sheet-code = Código
sheet-leg = Distancia del tramo (km)
sheet-total = Total
sheet-straight = Las distancias de los tramos son líneas rectas entre paradas, no distancias a pie.
sheet-legend = Leyenda del mapa
sheet-legend-pixels = píxeles de alerta de { $source }
sheet-legend-footprint = contorno gris: área del evento
sheet-legend-cross = cruz negra: punto al que caminar (centroide)
sheet-events = Eventos ({ $n })
sheet-stop-n = Parada { $n }
sheet-corroborated = confirmado por otra fuente
sheet-area = Área
sheet-detected = Detectado
sheet-dates = { $first } a { $last }
sheet-sources = Fuentes
sheet-stratum = Estrato
sheet-preview-alt = Vista previa de { $code }: área, píxeles de alerta, centroide, flecha del norte y escala
sheet-no-preview = Sin vista previa.
sheet-north = Norte arriba; cruz negra: centroide.
sheet-outcome = Resultado
sheet-if-false-alarm = Si falsa alarma
sheet-if-not-reached = Si no se llegó
sheet-if-confirmed-cause = Si confirmado, causa
sheet-photos-taken = fotos tomadas (mín. { $min })
sheet-position-recorded = posición registrada
sheet-notes = Notas:
sheet-controls = Puntos de control ({ $n })
sheet-controls-help = Aquí no hay alerta: busque desmonte que las alertas pudieron pasar por alto e informe lo que vea.
sheet-gps-name = En el GPS:
sheet-if-clearing-cause = Si encontró desmonte, causa
sheet-if-clearing-area = Si encontró desmonte, área estimada:
sheet-pos-dd = Lat, lon (GD, WGS 84)
sheet-pos-utm = UTM (metros, truncados: el cuadrado de 1 m donde está el punto)
sheet-pos-mgrs = MGRS (1 m, truncado como UTM)
sheet-zone = zona
sheet-hemisphere-north = norte
sheet-hemisphere-south = sur
sheet-outside-utm = fuera de la franja UTM
sheet-outside-mgrs = fuera de la franja UTM/MGRS
sheet-observed-position = Posición observada (lat, lon)
sheet-date-time = Fecha y hora (local)
sheet-photo-numbers = Números de las fotos
sheet-observer = Observador
