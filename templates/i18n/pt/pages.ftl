# Mensagens das páginas do servidor (ver en/pages.ftl).

## Layout
menu-main = Principal
menu-events = Eventos
menu-import = Importar
menu-trips = Viagens
menu-station = Envio na base
menu-dashboard = Painel
menu-disputes = Divergências
signed-in-as = Conectado como
log-out = Sair
not-signed-in = Não conectado
language-switch = Idioma
language-switch-button = Mudar

## Avisos de segurança
footer-safety-title = Segurança em primeiro lugar
footer-safety-approach = Não se aproxime de desmatamento em andamento, de máquinas nem de pessoas armadas.
footer-safety-approach-more = Observe de uma distância segura, anote o que puder e saia. "Não alcançado: segurança" é um bom relatório.
footer-safety-protocol = Siga o protocolo de segurança da sua organização e a lei local (autorizações, acesso à terra, plano de viagem, horários de contato).
footer-safety-consent = Fotos de pessoas precisam do consentimento delas. Fotografe a terra, não as pessoas.
footer-safety-evidence = Provas para processos judiciais seguem as regras locais e a prática de profissionais habilitados. O Groundproof guarda as fotos sem alteração e identificadas pelo conteúdo, mas não é um sistema de cadeia de custódia.
footer-safety-sensitive = Pacotes e retornos contêm locais de atividade possivelmente ilegal: trate-os como sigilosos.

## Entrar
login-title = Entrar
login-intro = Entre para acompanhar os alertas de desmatamento.
login-name = Nome de usuário
login-password = Senha
login-button = Entrar
login-note = O trabalho de campo pode ser perigoso: não se aproxime de operações em andamento nem de pessoas armadas, e siga o protocolo de segurança da sua organização e a lei local.
login-bad-credentials = Esse nome de usuário e essa senha não conferem.
login-locked = Tentativas erradas demais: espere 15 minutos e tente de novo.
login-failed = Não foi possível entrar; veja o registro do servidor.
login-session-ended = Sua sessão terminou (o tempo acabou, ou você saiu em outro lugar). Entre de novo; o que você enviou por último não foi salvo.

## Página de erro
error-back = Volte à página de onde veio, ou para
error-start-page = a página inicial

## Importar
import-title = Importar
import-nothing = Nada foi importado
import-imported-as = { $file } importado como { $source }
import-rows-read = linhas lidas
import-alerts = alertas importados
import-duplicates = duplicados descartados
import-skipped = linhas inválidas ignoradas
import-events-created = eventos criados
import-events-grown = eventos ampliados
import-events-merged = eventos unidos
import-skipped-rows = Linhas ignoradas
import-warnings = Avisos
import-see-events = Ver os eventos
import-zones-done = Zonas importadas
import-zones-summary = Zonas: { $zones }. Eventos ligados de novo às suas zonas: { $relinked }.
import-alert-file = Arquivo de alertas
import-alert-hint = CSV (linha de cabeçalho, vírgula ou ponto e vírgula) ou pontos GeoJSON. No máximo { $limit }. Um arquivo com qualquer erro não importa nada, a não ser que você ignore as linhas inválidas.
import-no-source = Ainda não há fonte de alertas registrada. Registre uma primeiro:
import-registered = Registradas: { $sizes }.
import-source = Fonte
import-choose = escolha…
import-format = Formato
import-format-auto = detectar pelo arquivo
import-threshold = Limite de confiança
import-threshold-hint = (só para confiança numérica)
import-file = Arquivo
import-skip-invalid = Ignorar linhas inválidas (importar as válidas e listar as outras)
import-alerts-button = Importar alertas
import-zone-file = Arquivo de zonas
import-zone-hint = FeatureCollection GeoJSON de feições Polygon ou MultiPolygon com um texto "name" e, opcionalmente, um booleano "priority". Uma zona com um nome já guardado é substituída. No máximo { $limit }.
import-zones-button = Importar zonas

## Parear um celular
pair-page-title = Parear um celular
pair-page-bundle = Pacote { $id } para { $team }, prazo { $due }.
pair-another = Outro código
pair-back = Voltar às viagens
pair-back-trip = Voltar à viagem
pairing-title = Colocar esta viagem em um celular
pairing-qr-label = Código QR que abre o aplicativo de campo com esta viagem
pairing-scan = No celular da equipe, leia o código com a câmera, ou abra o aplicativo de campo e digite este código:
pairing-open-app = Abrir o aplicativo de campo
pairing-once = O código funciona uma vez, para um celular, até { $expires }. Faça outro para cada celular. O celular passa a ter locais de atividade possivelmente ilegal: trate-o como sigiloso.

# --- trips, trip, preview, events, event ---
## Words shared by these pages: trip states, event statuses, modes, alert confidence
trip-state-issued = emitida
trip-state-overdue = atrasada
trip-state-partly-returned = devolvida em parte
trip-state-returned = devolvida
trip-state-cancelled = cancelada
trip-state-expired = vencida
status-unvisited = ainda não visitado
status-not-reached = não alcançado
status-confirmed = desmatamento confirmado
status-false-alarm = alarme falso
status-inconclusive = não dá para saber
status-disputed = em disputa
mode-response = resposta
mode-assessment = avaliação
confidence-low = baixa
confidence-high = alta
## Trips list and the issue form
trips-title = Viagens
trips-nothing-changed = Nada foi alterado
trips-cancelled = O pacote { $id } foi cancelado; a partir de agora, devoluções assinadas com a chave de envio dele são recusadas.
trips-issue-title = Emitir um pacote
trips-issue-hint = O modo resposta leva os eventos mais importantes agora; o modo avaliação sorteia uma amostra aleatória estratificada do tamanho da margem de erro (com semente, registrada). “Pré-visualizar” mostra os eventos escolhidos, a rota e o comprimento dela antes de emitir; ali você pode desmarcar eventos, incluir outros pelo código e mudar a partida. Os pacotes contêm locais de atividade possivelmente ilegal: trate-os como sensíveis.
trips-team = Equipe
trips-choose = escolher…
trips-mode = Modo
trips-zone = Zona
trips-any-zone = qualquer zona
trips-from = Detectado desde
trips-to = Detectado até
trips-source = Fonte
trips-any-source = qualquer fonte
trips-confidence = Maior confiança do alerta
trips-any = qualquer
trips-min-area = Área mínima (ha)
trips-max = Máximo de eventos
trips-margin = Margem de erro
trips-assessment-hint = (avaliação)
trips-controls = Pontos de controle
trips-seed = Semente
trips-seed-hint = (vazio: aleatória, registrada)
trips-start-lat = Latitude da partida
trips-start-lon = Longitude da partida
trips-start-name = Nome da partida
trips-start-placeholder = partida
trips-walking = Velocidade a pé (km/h)
trips-due = Prazo (dias)
trips-expires = Vence após (dias)
trips-status-legend = Só eventos cuja situação é
trips-status-hint = (nenhuma marcada: qualquer situação)
trips-extent = Área de trabalho
trips-extent-hint = (opcional: um Polygon ou MultiPolygon GeoJSON, ou uma Feature que o contenha, até 64 KiB; cole aqui ou escolha o arquivo)
trips-extent-file = Arquivo da área
trips-preview = Pré-visualizar
trips-issue-now = Emitir sem pré-visualizar
trips-filter = Filtrar viagens
trips-state = Situação
trips-any-state = qualquer situação
trips-every-team = todas as equipes
trips-show = Mostrar
trips-none = Nenhum pacote foi emitido ainda.
trips-none-match = Nenhuma viagem corresponde a estes filtros ({ $all } no total).
trips-count = { $shown } de { $all } viagem(ns).
trips-states-explained = Atrasada: prazo passado sem nada devolvido; vencida: validade passada sem nada devolvido; devolvida: cada parada tem um relatório.
trips-col-trip = Viagem
trips-col-issued = Emitida
trips-col-due = Prazo
trips-col-events = Eventos
trips-col-controls = Controles
trips-col-route = Rota (km)
trips-col-reports = Relatórios
trips-col-actions = Ações
trips-returns = ({ $n } devolução(ões))
trips-open = Abrir
trips-open-label = Abrir a viagem { $id }
trips-download = Baixar
trips-pair = Parear um celular
trips-pair-label = Parear um celular com o pacote { $id }
trips-cancel = Cancelar
trips-cancel-label = Cancelar o pacote { $id }
